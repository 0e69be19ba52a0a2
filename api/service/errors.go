package service

import (
	"errors"
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/fit"
)

// Kinds of error the use cases raise; the API's one status table maps them
// to HTTP (api/problem.go). The store's sentinels (db.ErrNotFound,
// db.ErrExists, db.ErrReference) pass through unchanged.
var (
	// ErrBadRequest: the request is malformed (400).
	ErrBadRequest = errors.New("bad request")
	// ErrInvalid: the request is well-formed but unusable (422).
	ErrInvalid = errors.New("invalid request")
	// ErrConflict: the Idempotency-Key was used for another request (409).
	ErrConflict = errors.New("idempotency key reused")
	// ErrTooMuchWork: the request asks for more work than the hard limit
	// (422, naming the field that drives the cost).
	ErrTooMuchWork = errors.New("too much work")
)

// FieldError is where a request broke (the problem's errors member).
type FieldError = wire.FieldError

// Error is a use-case error with the places in the request it concerns.
type Error struct {
	Kind   error // one of the kinds above, or another sentinel
	Detail string
	Fields []FieldError
}

func (e *Error) Error() string { return e.Detail }
func (e *Error) Unwrap() error { return e.Kind }

// Invalid is an ErrInvalid error pointing at one field of the body (a JSON
// Pointer).
func Invalid(pointer, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	return &Error{Kind: ErrInvalid, Detail: d, Fields: []FieldError{{Pointer: pointer, Detail: d}}}
}

// BadParameter is an ErrBadRequest error naming a query parameter.
func BadParameter(name, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	return &Error{Kind: ErrBadRequest, Detail: d, Fields: []FieldError{{Parameter: name, Detail: d}}}
}

// TooMuchWork is an ErrTooMuchWork error naming the field that drives the
// cost.
func TooMuchWork(pointer, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	return &Error{Kind: ErrTooMuchWork, Detail: d, Fields: []FieldError{{Pointer: pointer, Detail: d}}}
}

// FieldsOf points at the field a fit or ingest error concerns, or returns
// nil.
func FieldsOf(err error) []FieldError {
	var re *Error
	var pe *fit.PointError
	var se *fit.SettingError
	var ce *ingest.ParseError
	switch {
	case errors.As(err, &re):
		return re.Fields
	case errors.As(err, &pe):
		return []FieldError{{Pointer: fmt.Sprintf("/points/%d/%s", pe.Index, pe.Field), Detail: pe.Err.Error()}}
	case errors.As(err, &se):
		return []FieldError{{Pointer: "/" + strings.ReplaceAll(se.Field, ".", "/"), Detail: se.Err.Error()}}
	case errors.As(err, &ce):
		return []FieldError{{Row: ce.Line, Column: ce.Column, Detail: ce.Err.Error()}}
	}
	return nil
}

// EscapePointer escapes a JSON Pointer token (RFC 6901 §3).
func EscapePointer(s string) string {
	return strings.ReplaceAll(strings.ReplaceAll(s, "~", "~0"), "/", "~1")
}

// MaxText bounds a free-text field (a name, a label, an ID naming another
// record) in bytes; the store indexes some of them.
const MaxText = 500

// checkText refuses text the store must not hold, identically on both
// engines: invalid UTF-8, control characters (Unicode category Cc: C0,
// DEL and C1, NUL included, which PostgreSQL refuses in text and jsonb)
// and more than MaxText bytes.
func checkText(pointer, s string) error {
	if len(s) > MaxText {
		return Invalid(pointer, "text must be at most %d bytes", MaxText)
	}
	if !ValidText(s) {
		return Invalid(pointer, "text must be valid UTF-8 without control characters")
	}
	return nil
}

// ValidText reports whether s is valid UTF-8 without control characters
// (Unicode category Cc).
func ValidText(s string) bool {
	if !utf8.ValidString(s) {
		return false
	}
	for _, r := range s {
		if unicode.IsControl(r) {
			return false
		}
	}
	return true
}
