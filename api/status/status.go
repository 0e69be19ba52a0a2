// Package status is the one table from Sluice's error categories to HTTP
// status codes, used by the API's problem answers and the dashboard's
// error pages alike.
package status

import (
	"errors"
	"net/http"

	"sluice/api/ingest"
	"sluice/api/service"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// The categories of HTTP itself; the use cases raise theirs (service.Err…)
// and the store its sentinels (db.Err…).
var (
	ErrUnauthenticated = errors.New("unauthenticated") // no valid token or session
	ErrForbidden       = errors.New("forbidden")       // the token lacks the scope
	ErrTooLarge        = errors.New("request body too large")
	ErrUnsupportedType = errors.New("unsupported media type")
	ErrNotFoundRoute   = errors.New("no such endpoint")
	ErrMethod          = errors.New("method not allowed")
	ErrUnavailable     = errors.New("unavailable")
	ErrBodyTimeout     = errors.New("request body too slow") // it did not arrive within its read deadline
)

// table maps error categories to HTTP status (first match wins).
var table = []struct {
	err    error
	status int
}{
	{service.ErrBadRequest, http.StatusBadRequest},
	{service.ErrInvalid, http.StatusUnprocessableEntity},
	{service.ErrTooMuchWork, http.StatusUnprocessableEntity},
	{fit.ErrInvalidInput, http.StatusUnprocessableEntity},
	{plate.ErrInvalid, http.StatusUnprocessableEntity},
	{ingest.ErrBadValue, http.StatusUnprocessableEntity},
	{ingest.ErrNotNumber, http.StatusUnprocessableEntity},
	{ingest.ErrMissingColumn, http.StatusUnprocessableEntity},
	{ingest.ErrNoData, http.StatusUnprocessableEntity},
	{ingest.ErrSyntax, http.StatusBadRequest},
	{ingest.ErrNoUnit, http.StatusUnprocessableEntity},
	{db.ErrReference, http.StatusUnprocessableEntity},
	{db.ErrInvalid, http.StatusUnprocessableEntity},
	{ErrUnauthenticated, http.StatusUnauthorized},
	{ErrForbidden, http.StatusForbidden},
	{db.ErrNotFound, http.StatusNotFound},
	{db.ErrExists, http.StatusConflict},
	{service.ErrConflict, http.StatusConflict},
	{ErrTooLarge, http.StatusRequestEntityTooLarge},
	{ErrBodyTimeout, http.StatusRequestTimeout},
	{ErrUnsupportedType, http.StatusUnsupportedMediaType},
	{ErrNotFoundRoute, http.StatusNotFound},
	{ErrMethod, http.StatusMethodNotAllowed},
	{ErrUnavailable, http.StatusServiceUnavailable},
	// The database is unreachable or did not answer within its deadline:
	// an outage, answered with Retry-After.
	{db.ErrUnavailable, http.StatusServiceUnavailable},
}

// Of is the HTTP status of err: its category's, else 500.
func Of(err error) int {
	for _, e := range table {
		if errors.Is(err, e.err) {
			return e.status
		}
	}
	return http.StatusInternalServerError
}
