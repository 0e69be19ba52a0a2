package fit

import (
	"errors"
	"fmt"
)

// ErrInvalidInput marks an error in the data or settings a caller passed in,
// as opposed to a fit that failed on valid data (which is reported in the
// Result's status and flags, not as an error).
var ErrInvalidInput = errors.New("invalid input")

// PointError says which point of a curve is unusable and why.
type PointError struct {
	Index int    // index of the point in Curve.Points
	Field string // "conc", "response" or "weight"
	Err   error
}

func (e *PointError) Error() string {
	return fmt.Sprintf("point %d: %s: %v", e.Index, e.Field, e.Err)
}

func (e *PointError) Unwrap() error { return e.Err }

// SettingError says which setting is unusable and why.
type SettingError struct {
	Field string // the setting's name, as in JSON (e.g. "fixed.top", "confidence")
	Err   error
}

func (e *SettingError) Error() string { return fmt.Sprintf("%s: %v", e.Field, e.Err) }

func (e *SettingError) Unwrap() error { return e.Err }

func invalid(format string, args ...any) error {
	return fmt.Errorf("%w: "+format, append([]any{ErrInvalidInput}, args...)...)
}
