package potency

import (
	"errors"
	"fmt"
	"math"
)

// ErrInvalid marks an error in the data or settings a caller passed in.
var ErrInvalid = errors.New("invalid input")

// FieldError says which input is unusable and why. Field is named as in the
// API's request: "confidence", "msr_window", "runs[3].log_ec50",
// "pairs[0].run2", …
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

func indexed(name string, i int) string { return fmt.Sprintf("%s[%d]", name, i) }

// checkConfidence resolves a confidence level: 0 means DefaultConfidence;
// otherwise it must lie in (0, 1).
func checkConfidence(c float64) (float64, error) {
	if c == 0 {
		return DefaultConfidence, nil
	}
	if !(c > 0 && c < 1) {
		return 0, fieldErr("confidence", "must be in (0, 1), got %v", c)
	}
	return c, nil
}
