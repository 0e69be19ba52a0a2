package web

import (
	"net/http"
	"strings"

	"github.com/gin-gonic/gin"
)

// contentPolicy allows the site's own scripts, styles and images only:
// no inline script or style (figures are inline SVG with presentation
// attributes, which the policy does not govern), forms post to the site,
// and no other site may frame it.
const contentPolicy = "default-src 'none'; script-src 'self'; style-src 'self'; img-src 'self' data:; " +
	"connect-src 'self'; form-action 'self'; frame-ancestors 'none'; base-uri 'none'"

// headers sets the security headers of every dashboard response.
func (s *Site) headers(c *gin.Context) {
	h := c.Writer.Header()
	h.Set("Content-Security-Policy", contentPolicy)
	h.Set("X-Content-Type-Options", "nosniff")
	h.Set("Referrer-Policy", "same-origin")
	h.Set("X-Frame-Options", "DENY")
	c.Next()
}

// static serves the embedded assets; they change only with the binary,
// so browsers may keep them for an hour.
func (s *Site) static(root http.FileSystem) gin.HandlerFunc {
	files := http.FileServer(root)
	return func(c *gin.Context) {
		name := c.Param("file")
		if strings.HasSuffix(name, "/") {
			s.NotFound(c)
			return
		}
		c.Header("Cache-Control", "public, max-age=3600")
		c.Request.URL.Path = name
		files.ServeHTTP(c.Writer, c.Request)
	}
}
