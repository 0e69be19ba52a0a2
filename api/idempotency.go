package api

import (
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
)

// idemOf builds a request's idempotency from its Idempotency-Key header
// (nil without one): the route, the query parameters except wait (which
// changes only how the caller is answered) and the body. A handler whose
// reply depends on a header as well (Accept) passes what it chose in also,
// which counts as a parameter.
func idemOf(c *gin.Context, body []byte, also ...string) (*service.Idem, error) {
	params := map[string]string{}
	for k, vs := range c.Request.URL.Query() {
		if k != "wait" {
			params[k] = strings.Join(vs, "\x00")
		}
	}
	for i := 0; i+1 < len(also); i += 2 {
		params[also[i]] = also[i+1]
	}
	return service.NewIdem(c.GetHeader("Idempotency-Key"), c.Request.Method+" "+c.FullPath(), params, body)
}

// writeReply sends a use case's reply; a replayed one is marked
// Idempotency-Replayed: true.
func writeReply(c *gin.Context, r *service.Reply) {
	if r.Location != "" {
		c.Header("Location", r.Location)
	}
	if r.Replayed {
		c.Header("Idempotency-Replayed", "true")
	}
	c.Data(r.Status, r.ContentType, r.Body)
}
