package web

import (
	"bytes"
	"context"
	"errors"
	"net/http"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/api/status"
)

// view is what every page template sees: the page's own Data and what the
// layout needs.
type view struct {
	Title  string
	Viewer service.Caller
	CSRF   string
	// CanSubmit: the viewer may review and refit (the submit scope).
	CanSubmit bool
	// Caution shows the research-use caution in the footer; pages with
	// potencies or predictions set it.
	Caution bool
	Data    any
}

// render executes a page into a buffer and sends it, so that a template
// error is a clean 500 page, never half a page.
func (s *Site) render(c *gin.Context, code int, page, title string, data any) {
	s.renderView(c, code, page, view{Title: title, Data: data})
}

// renderCaution is render for pages that show potencies or predictions.
func (s *Site) renderCaution(c *gin.Context, code int, page, title string, data any) {
	s.renderView(c, code, page, view{Title: title, Data: data, Caution: true})
}

func (s *Site) renderView(c *gin.Context, code int, page string, v view) {
	v.Viewer, v.CSRF = viewer(c), csrfOf(c)
	v.CanSubmit = v.Viewer.Can(service.ScopeSubmit)
	t, ok := s.pages[page]
	var buf bytes.Buffer
	if !ok {
		s.log.Error("no such page template", "page", page)
		code, buf = http.StatusInternalServerError, *bytes.NewBufferString("internal error: no page " + page)
	} else if err := t.Execute(&buf, v); err != nil {
		s.log.Error("render page", "page", page, "path", c.Request.URL.Path, "err", err)
		code, buf = http.StatusInternalServerError, *bytes.NewBufferString("internal error: the page could not be drawn")
	}
	c.Header("Cache-Control", "no-store")
	c.Data(code, "text/html; charset=utf-8", buf.Bytes())
	c.Abort()
}

type errorData struct {
	Status  int
	Heading string
	Message string
}

// errorPage answers with the error page and stops the request.
func (s *Site) errorPage(c *gin.Context, code int, msg string) {
	s.render(c, code, "error", http.StatusText(code), errorData{Status: code, Heading: http.StatusText(code), Message: msg})
}

// fail answers a use case's error: its status from the one table
// (api/status); a 4xx shows the error's own words, a 5xx is logged and
// shows none. A request whose visitor went away gets nothing (499).
func (s *Site) fail(c *gin.Context, err error) {
	if c.Request.Context().Err() != nil && errors.Is(err, context.Canceled) {
		c.AbortWithStatus(499)
		return
	}
	code := status.Of(err)
	msg := err.Error()
	if code == http.StatusServiceUnavailable {
		// An outage (the database is unreachable or too slow), not a
		// fault of the page: try again shortly, as the API's 503 says.
		s.log.Warn("page unavailable", "path", c.Request.URL.Path, "err", err)
		c.Header("Retry-After", "5")
		s.errorPage(c, code, "The database is not answering at the moment; nothing was changed. Try again in a few seconds.")
		return
	}
	if code >= 500 {
		s.log.Error("page failed", "path", c.Request.URL.Path, "err", err)
		msg = "Something went wrong on the server; the page could not be shown. Nothing was changed."
	}
	s.errorPage(c, code, msg)
}
