package drift

import (
	"errors"
	"fmt"
	"math"
)

// ErrInvalid marks an error in the data or settings a caller passed in.
var ErrInvalid = errors.New("invalid input")

// FieldError says which input is unusable and why. Field is named as in the
// API's request: "ewma_lambda", "baseline.sd", "points[3].value", …
type FieldError struct {
	Field string
	Err   error
}

func (e *FieldError) Error() string { return e.Field + ": " + e.Err.Error() }

// Unwrap gives the cause and ErrInvalid, so errors.Is(err, ErrInvalid) holds.
func (e *FieldError) Unwrap() []error { return []error{ErrInvalid, e.Err} }

func fieldErr(field, format string, args ...any) error {
	return &FieldError{Field: field, Err: fmt.Errorf(format, args...)}
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }
