package web

import (
	"context"
	"crypto/subtle"
	"errors"
	"net/http"
	"net/url"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/db"
)

type signInData struct {
	Next, Problem string
	AuthDisabled  bool
	// Form is the value the form echoes, also set as a cookie: a page of
	// another site cannot read it, so it cannot sign a visitor in.
	Form string
}

// signInPage is GET /signin: a form that takes an API token.
func (s *Site) signInPage(c *gin.Context) {
	s.signInForm(c, http.StatusOK, "")
}

func (s *Site) signInForm(c *gin.Context, status int, problem string) {
	form := secret()
	s.setCookie(c, signInCookie, form, 600)
	s.render(c, status, "signin", "Sign in", signInData{Next: safeNext(c.Query("next")), Problem: problem,
		AuthDisabled: s.cfg.AuthDisabled, Form: form})
}

// signIn is POST /signin: the token becomes a session (a random secret in
// an HttpOnly, SameSite=Strict cookie; its hash stored with an absolute
// and an idle end), and the browser goes where it was going.
func (s *Site) signIn(c *gin.Context) {
	ck, _ := c.Cookie(signInCookie)
	if ck == "" || subtle.ConstantTimeCompare([]byte(ck), []byte(c.PostForm("form"))) != 1 {
		s.signInForm(c, http.StatusForbidden, "The sign-in form was out of date; try again.")
		return
	}
	ctx := c.Request.Context()
	var tokenID string
	if !s.cfg.AuthDisabled {
		tok, err := s.store.TokenByHash(ctx, service.HashToken(strings.TrimSpace(c.PostForm("token"))))
		if errors.Is(err, db.ErrNotFound) {
			s.signInForm(c, http.StatusUnauthorized, "That token is not valid: it is mistyped or has been revoked.")
			return
		}
		if err != nil {
			s.fail(c, err)
			return
		}
		tokenID = tok.ID
	}
	sec, err := s.open(ctx, tokenID)
	if err != nil {
		s.fail(c, err)
		return
	}
	s.setCookie(c, signInCookie, "", -1)
	s.setCookie(c, sessionCookie, sec, int(s.cfg.MaxAge.Seconds()))
	c.Redirect(http.StatusSeeOther, safeNext(c.PostForm("next")))
}

// open stores a new session of the token and returns its secret; it ends
// the expired and idle sessions on the way.
func (s *Site) open(ctx context.Context, tokenID string) (string, error) {
	sec, now := secret(), s.now()
	sess := &db.Session{Hash: hashOf(sec), TokenID: tokenID, CSRF: secret(), CreatedAt: now, LastSeen: now,
		ExpiresAt: now.Add(s.cfg.MaxAge)}
	err := s.store.Write(ctx, func(w db.Writer) error {
		if _, err := w.DeleteSessionsBefore(ctx, now.Add(-s.cfg.IdleTimeout), now); err != nil {
			return err
		}
		return w.InsertSession(ctx, sess)
	})
	return sec, err
}

// signOut is POST /signout: the session ends and its cookie goes.
func (s *Site) signOut(c *gin.Context) {
	ck, _ := c.Cookie(sessionCookie)
	ctx := c.Request.Context()
	if err := s.store.Write(ctx, func(w db.Writer) error { return w.DeleteSession(ctx, hashOf(ck)) }); err != nil {
		s.fail(c, err)
		return
	}
	s.setCookie(c, sessionCookie, "", -1)
	c.Redirect(http.StatusSeeOther, "/signin")
}

// safeNext is a local path to return to after sign-in, "/" for anything
// else (an absolute or scheme-relative URL would send the visitor away).
func safeNext(next string) string {
	if !strings.HasPrefix(next, "/") || strings.HasPrefix(next, "//") || strings.HasPrefix(next, "/\\") {
		return "/"
	}
	if u, err := url.Parse(next); err != nil || u.Host != "" || u.Scheme != "" {
		return "/"
	}
	return next
}

func urlQueryEscape(s string) string { return url.QueryEscape(s) }
