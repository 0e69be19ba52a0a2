package web

import (
	"crypto/tls"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/gin-gonic/gin"
)

// The session cookie is HttpOnly and SameSite=Strict always, and Secure
// under TLS or when the server is told it sits behind a TLS proxy.
func TestCookieAttributes(t *testing.T) {
	for _, c := range []struct {
		secureCfg, tls, wantSecure bool
	}{{false, false, false}, {true, false, true}, {false, true, true}} {
		s := &Site{cfg: Config{SecureCookies: c.secureCfg}}
		w := httptest.NewRecorder()
		ctx, _ := gin.CreateTestContext(w)
		ctx.Request = httptest.NewRequest(http.MethodGet, "/", nil)
		if c.tls {
			ctx.Request.TLS = &tls.ConnectionState{}
		}
		s.setCookie(ctx, sessionCookie, "v", 60)
		h := w.Header().Get("Set-Cookie")
		if !strings.Contains(h, "HttpOnly") || !strings.Contains(h, "SameSite=Strict") || strings.Contains(h, "Secure") != c.wantSecure {
			t.Errorf("config secure %v, TLS %v: Set-Cookie %q", c.secureCfg, c.tls, h)
		}
	}
}
