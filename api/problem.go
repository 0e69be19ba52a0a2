package api

import (
	"context"
	"encoding/json"
	"errors"
	"net/http"
	"strings"

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
)

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
	p := Problem{Status: status, Title: http.StatusText(status), Instance: c.Request.URL.Path}
	p.Type = problemType + strings.ReplaceAll(strings.ToLower(p.Title), " ", "-")
	var re *service.Error
	switch {
	case status >= 500 && errors.As(err, &re):
		p.Detail = re.Detail
	case status >= 500:
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
