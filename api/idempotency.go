package api

import (
	"context"
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

// handleJSONWrite is a write handler whose use case takes the decoded body alone:
// decode the body into a T, build the request's idempotency (idemOf), call
// the use case, send its reply.
func handleJSONWrite[T any](s *Server, c *gin.Context, call func(context.Context, service.Caller, *service.Idem, *T) (*service.Reply, error)) {
	writeJSONBody(s, c, nil, call)
}

// handleIDWrite is handleJSONWrite for a use case that also takes the
// route's {id}; the id joins the idempotency hash.
func handleIDWrite[T any](s *Server, c *gin.Context, call func(context.Context, service.Caller, *service.Idem, string, *T) (*service.Reply, error)) {
	id := c.Param("id")
	writeJSONBody(s, c, []string{"id", id}, func(ctx context.Context, who service.Caller, idem *service.Idem, req *T) (*service.Reply, error) {
		return call(ctx, who, idem, id, req)
	})
}

// writeJSONBody decodes, builds the idempotency over the body and the
// route parameters also (name, value pairs), calls and replies.
func writeJSONBody[T any](s *Server, c *gin.Context, also []string, call func(context.Context, service.Caller, *service.Idem, *T) (*service.Reply, error)) {
	var req T
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	idem, err := idemOf(c, body, also...)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := call(c.Request.Context(), callerOf(c), idem, &req)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}
