package api

import (
	"context"
	"encoding/json"
	"errors"
	"net/http"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/api/status"
	"sluice/api/wire"
)

// Problem is an RFC 9457 problem details object with the fields that went
// wrong.
type Problem struct {
	Type     string       `json:"type"`
	Title    string       `json:"title"`
	Status   int          `json:"status"`
	Detail   string       `json:"detail,omitempty"`
	Instance string       `json:"instance,omitempty"`
	Errors   []FieldError `json:"errors,omitempty"`
}

// FieldError points at one offending field: a JSON Pointer (RFC 6901) into
// the request body, a query parameter, or a row and column of a CSV body.
// The use cases raise the same type.
type FieldError = wire.FieldError

// Error categories. The use cases raise theirs (service.Err…); the
// handlers add those of HTTP itself (api/status). statusOf maps them to HTTP.
var (
	errBadRequest      = service.ErrBadRequest     // malformed syntax
	errInvalid         = service.ErrInvalid        // well-formed but unusable
	errUnauthenticated = status.ErrUnauthenticated // no valid token
	errForbidden       = status.ErrForbidden       // token lacks the scope
	errTooLarge        = status.ErrTooLarge
	errUnsupportedType = status.ErrUnsupportedType
	errNotFoundRoute   = status.ErrNotFoundRoute
	errMethod          = status.ErrMethod
	errUnavailable     = status.ErrUnavailable
	errBodyTimeout     = status.ErrBodyTimeout
)

// retryAfter is the Retry-After (RFC 9110 §10.2.3) of a 503: the database
// is down or frozen, so try again in a few seconds (after a restart, the
// pool reconnects within 1–6 s).
const retryAfter = "5"

// statusOf maps an error to HTTP: the one table in api/status.
func statusOf(err error) int { return status.Of(err) }

// invalidField is a 422 pointing at a field of the body.
func invalidField(pointer, format string, a ...any) error {
	return service.Invalid(pointer, format, a...)
}

// badParameter is a 400 naming a query parameter.
func badParameter(name, format string, a ...any) error {
	return service.BadParameter(name, format, a...)
}

// statusClientClosed answers a request whose client went away.
const statusClientClosed = 499

// problemType is the base of the problem type URIs; they name categories
// and need not resolve.
const problemType = "urn:sluice:problem:"

// writeProblem sends err as application/problem+json. A 5xx hides the
// internal error from the client and is logged instead.
//
// A request whose client went away (its context is cancelled, and the
// error is that cancellation) is no server error: it is answered with
// 499 (Client Closed Request, as proxies count it; no one reads it) and
// logged at debug level, never as an ERROR or a 5xx in the metrics.
func (s *Server) writeProblem(c *gin.Context, err error) {
	if c.Request.Context().Err() != nil && errors.Is(err, context.Canceled) {
		s.log.Debug("client went away", "path", c.Request.URL.Path, "err", err)
		c.AbortWithStatus(statusClientClosed)
		return
	}
	status := statusOf(err)
	if bodyUnread(c) {
		// Answered before the body was read (401, 403, 413, a bad
		// parameter, …): close the connection rather than read a body
		// no one will use, so that a client cannot hold it by sending
		// slowly. Connection: close stops net/http from draining the body
		// to reuse the connection, but closing the body after the handler
		// still reads up to 256 KiB of it: the read deadline, moved to
		// now, ends that read at once.
		c.Header("Connection", "close")
		http.NewResponseController(c.Writer).SetReadDeadline(time.Now())
	}
	p := Problem{Status: status, Title: http.StatusText(status), Instance: c.Request.URL.Path}
	p.Type = problemType + strings.ReplaceAll(strings.ToLower(p.Title), " ", "-")
	var re *service.Error
	switch {
	case status == http.StatusServiceUnavailable:
		// An outage, not a bug: the client may retry; the operator reads
		// sluice_server_errors_total{cause="unavailable"} and /readyz.
		c.Header("Retry-After", retryAfter)
		s.metrics.serverError(causeUnavailable)
		if errors.As(err, &re) {
			p.Detail = re.Detail
		} else {
			s.log.Warn("database unavailable", "path", c.Request.URL.Path, "err", err)
			p.Detail = "the database is unavailable; nothing was changed; try again later"
		}
	case status >= 500 && errors.As(err, &re):
		s.metrics.serverError(causeInternal)
		p.Detail = re.Detail
	case status >= 500:
		s.metrics.serverError(causeInternal)
		s.log.Error("request failed", "path", c.Request.URL.Path, "err", err)
		p.Detail = "internal error; the request was not completed"
	case errors.As(err, &re):
		p.Detail, p.Errors = re.Detail, re.Fields
	default:
		p.Detail = err.Error()
		p.Errors = service.FieldsOf(err)
	}
	body, merr := json.Marshal(p)
	if merr != nil {
		s.log.Error("encode problem", "path", c.Request.URL.Path, "err", merr)
		c.AbortWithStatus(http.StatusInternalServerError)
		return
	}
	c.Data(status, "application/problem+json", body)
	c.Abort()
}

// fieldsOf points at the field a fit or ingest error concerns.
func fieldsOf(err error) []FieldError { return service.FieldsOf(err) }
