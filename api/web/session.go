package web

import (
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base64"
	"encoding/hex"
	"errors"
	"net/http"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/db"
)

const (
	// sessionCookie holds the session's secret; signInCookie the value
	// the sign-in form must echo (the form has no session yet).
	sessionCookie = "sluice_session"
	signInCookie  = "sluice_signin"
	viewerKey     = "sluice.web.viewer"
	csrfKey       = "sluice.web.csrf"
	// touchEvery bounds how often a page view records the session's use.
	touchEvery = time.Minute
)

// secret returns 32 bytes from the system's secure source, base64url.
func secret() string {
	var b [32]byte
	rand.Read(b[:])
	return base64.RawURLEncoding.EncodeToString(b[:])
}

// hashOf is the stored form of a session secret: hex SHA-256.
func hashOf(secret string) string {
	h := sha256.Sum256([]byte(secret))
	return hex.EncodeToString(h[:])
}

// viewer is who is signed in; csrfOf the value their forms carry.
func viewer(c *gin.Context) service.Caller {
	v, _ := c.Get(viewerKey)
	who, _ := v.(service.Caller)
	return who
}

func csrfOf(c *gin.Context) string { return c.GetString(csrfKey) }

// session admits requests with a live session: GETs without one go to the
// sign-in page and come back; anything else is a 401 page.
func (s *Site) session(c *gin.Context) {
	sess, err := s.lookup(c)
	switch {
	case errors.Is(err, db.ErrNotFound) && c.Request.Method == http.MethodGet:
		next := c.Request.URL.RequestURI()
		c.Redirect(http.StatusSeeOther, "/signin?next="+urlQueryEscape(next))
		c.Abort()
		return
	case errors.Is(err, db.ErrNotFound):
		s.errorPage(c, http.StatusUnauthorized, "Your session has ended; sign in again.")
		return
	case err != nil:
		s.fail(c, err)
		return
	}
	c.Set(viewerKey, service.Caller{Name: sess.Name, Scope: sess.Scope})
	c.Set(csrfKey, sess.CSRF)
	c.Next()
}

// lookup finds the request's live session, recording its use at most once
// a touchEvery; db.ErrNotFound when there is none (no cookie, unknown,
// expired, idle, or its token revoked).
func (s *Site) lookup(c *gin.Context) (*db.Session, error) {
	ck, err := c.Cookie(sessionCookie)
	if err != nil || ck == "" {
		return nil, db.ErrNotFound
	}
	ctx := c.Request.Context()
	sess, err := s.store.Session(ctx, hashOf(ck))
	if err != nil {
		return nil, err
	}
	now := s.now()
	switch {
	case !now.Before(sess.ExpiresAt), !now.Before(sess.LastSeen.Add(s.cfg.IdleTimeout)):
		return nil, db.ErrNotFound
	case sess.TokenID == "" && !s.cfg.AuthDisabled:
		// Opened while authentication was off: not valid now it is on.
		return nil, db.ErrNotFound
	}
	if now.Sub(sess.LastSeen) >= touchEvery {
		err := s.store.Write(ctx, func(w db.Writer) error { return w.TouchSession(ctx, sess.Hash, now) })
		if err != nil {
			return nil, err
		}
	}
	return sess, nil
}

// csrf refuses a form POST whose csrf field is not its session's.
func (s *Site) csrf(c *gin.Context) {
	want := csrfOf(c)
	got := c.PostForm("csrf")
	if want == "" || subtle.ConstantTimeCompare([]byte(got), []byte(want)) != 1 {
		s.errorPage(c, http.StatusForbidden, "The form's security token is missing or out of date, so nothing was changed. "+
			"Reload the page and try again.")
		return
	}
	c.Next()
}

// requireScope refuses a viewer whose scope does not include scope, with
// a 403 page; nothing is done.
func (s *Site) requireScope(scope string) gin.HandlerFunc {
	return func(c *gin.Context) {
		if who := viewer(c); !who.Can(scope) {
			s.errorPage(c, http.StatusForbidden, "Signed in as "+who.Name+" with the "+who.Scope+" scope; this needs "+scope+
				". Nothing was changed.")
			return
		}
		c.Next()
	}
}

// setCookie sets an HttpOnly, SameSite=Strict cookie for the whole site,
// Secure under TLS or when configured; maxAge < 0 deletes it.
func (s *Site) setCookie(c *gin.Context, name, value string, maxAge int) {
	http.SetCookie(c.Writer, &http.Cookie{Name: name, Value: value, Path: "/", MaxAge: maxAge, HttpOnly: true,
		Secure: s.cfg.SecureCookies || c.Request.TLS != nil, SameSite: http.SameSiteStrictMode})
}
