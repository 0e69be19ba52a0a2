package api

import (
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/db"
	"sluice/fit"
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
type FieldError struct {
	Pointer   string `json:"pointer,omitempty"`
	Parameter string `json:"parameter,omitempty"`
	Row       int    `json:"row,omitempty"`
	Column    int    `json:"column,omitempty"`
	Detail    string `json:"detail"`
}

// Error categories the handlers raise; statusOf maps them to HTTP.
var (
	errBadRequest      = errors.New("bad request")       // malformed syntax
	errInvalid         = errors.New("invalid request")   // well-formed but unusable
	errUnauthenticated = errors.New("unauthenticated")   // no valid token
	errForbidden       = errors.New("forbidden")         // token lacks the scope
	errIdempotencyBody = errors.New("idempotency clash") // same key, different body
	errTooLarge        = errors.New("request body too large")
	errUnsupportedType = errors.New("unsupported media type")
	errNotFoundRoute   = errors.New("no such endpoint")
	errMethod          = errors.New("method not allowed")
	errUnavailable     = errors.New("unavailable")
)

// statusTable is the one place that maps error categories to HTTP status
// (first match wins).
var statusTable = []struct {
	err    error
	status int
}{
	{errBadRequest, http.StatusBadRequest},
	{errInvalid, http.StatusUnprocessableEntity},
	{fit.ErrInvalidInput, http.StatusUnprocessableEntity},
	{ingest.ErrBadValue, http.StatusUnprocessableEntity},
	{ingest.ErrNotNumber, http.StatusUnprocessableEntity},
	{ingest.ErrMissingColumn, http.StatusUnprocessableEntity},
	{ingest.ErrNoData, http.StatusUnprocessableEntity},
	{db.ErrReference, http.StatusUnprocessableEntity},
	{db.ErrInvalid, http.StatusUnprocessableEntity},
	{errUnauthenticated, http.StatusUnauthorized},
	{errForbidden, http.StatusForbidden},
	{db.ErrNotFound, http.StatusNotFound},
	{db.ErrExists, http.StatusConflict},
	{errIdempotencyBody, http.StatusConflict},
	{errTooLarge, http.StatusRequestEntityTooLarge},
	{errUnsupportedType, http.StatusUnsupportedMediaType},
	{errNotFoundRoute, http.StatusNotFound},
	{errMethod, http.StatusMethodNotAllowed},
	{errUnavailable, http.StatusServiceUnavailable},
}

func statusOf(err error) int {
	for _, e := range statusTable {
		if errors.Is(err, e.err) {
			return e.status
		}
	}
	return http.StatusInternalServerError
}

// requestError is an error with the fields it concerns.
type requestError struct {
	kind   error
	detail string
	fields []FieldError
}

func (e *requestError) Error() string { return e.detail }
func (e *requestError) Unwrap() error { return e.kind }

func invalidField(pointer, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	return &requestError{kind: errInvalid, detail: d, fields: []FieldError{{Pointer: pointer, Detail: d}}}
}

func badParameter(name, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	return &requestError{kind: errBadRequest, detail: d, fields: []FieldError{{Parameter: name, Detail: d}}}
}

// problemType is the base of the problem type URIs; they name categories
// and need not resolve.
const problemType = "urn:sluice:problem:"

// writeProblem sends err as application/problem+json. A 5xx hides the
// internal error from the client and is logged instead.
func (s *Server) writeProblem(c *gin.Context, err error) {
	status := statusOf(err)
	p := Problem{Status: status, Title: http.StatusText(status), Instance: c.Request.URL.Path}
	p.Type = problemType + strings.ReplaceAll(strings.ToLower(p.Title), " ", "-")
	var re *requestError
	switch {
	case status >= 500 && errors.As(err, &re):
		p.Detail = re.detail
	case status >= 500:
		s.log.Error("request failed", "path", c.Request.URL.Path, "err", err)
		p.Detail = "internal error; the request was not completed"
	case errors.As(err, &re):
		p.Detail, p.Errors = re.detail, re.fields
	default:
		p.Detail = err.Error()
		p.Errors = fieldsOf(err)
	}
	body, _ := json.Marshal(p)
	c.Data(status, "application/problem+json", body)
	c.Abort()
}

// fieldsOf points at the field a fit or ingest error concerns.
func fieldsOf(err error) []FieldError {
	var pe *fit.PointError
	var se *fit.SettingError
	var ce *ingest.ParseError
	switch {
	case errors.As(err, &pe):
		return []FieldError{{Pointer: fmt.Sprintf("/points/%d/%s", pe.Index, pe.Field), Detail: pe.Err.Error()}}
	case errors.As(err, &se):
		return []FieldError{{Pointer: "/" + strings.ReplaceAll(se.Field, ".", "/"), Detail: se.Err.Error()}}
	case errors.As(err, &ce):
		return []FieldError{{Row: ce.Line, Column: ce.Column, Detail: ce.Err.Error()}}
	}
	return nil
}
