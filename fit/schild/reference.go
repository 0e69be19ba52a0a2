package schild

import (
	"errors"
	"fmt"

	"sluice/fit"
)

// OperationalError says which curve of an operational analysis failed:
// "reference" (the full agonist) or "partial".
type OperationalError struct {
	Curve string
	Err   error
}

func (e *OperationalError) Error() string { return e.Curve + ": " + e.Err.Error() }

func (e *OperationalError) Unwrap() error { return e.Err }

// MinOperationalPoints is the fewest points each curve of
// OperationalFromReference may have.
const MinOperationalPoints = 5

// OperationalFromReference is the operational model of a partial agonist
// against a full agonist measured on the same system (FACTS §3): the
// reference's Hill fit with bottom fixed at 0 gives the system maximum
// Em (its fitted top), and the partial agonist's curve is then fitted by
// FitOperational with Em fixed there. KA and τ cannot be separated from a
// full agonist's curve alone; the reference is what makes τ finite.
// confidence is the level of the intervals; zero means 0.95. An error is an
// *OperationalError naming the curve.
func OperationalFromReference(reference, partial []fit.Point, confidence float64) (*OperationalFit, error) {
	for _, c := range []struct {
		name string
		pts  []fit.Point
	}{{"reference", reference}, {"partial", partial}} {
		if len(c.pts) < MinOperationalPoints {
			return nil, &OperationalError{c.name, fmt.Errorf("%w: give at least %d points", fit.ErrInvalidInput, MinOperationalPoints)}
		}
	}
	rf, err := fit.Fit(fit.Curve{Points: reference}, &fit.Settings{Model: fit.Hill, Fixed: map[string]float64{"bottom": 0}})
	if err != nil {
		return nil, &OperationalError{"reference", err}
	}
	if !rf.Converged() {
		return nil, &OperationalError{"reference", errors.New("the reference curve did not fit")}
	}
	top := rf.Top()
	if !(top.Estimate > 0) {
		return nil, &OperationalError{"reference", fmt.Errorf("%w: its fitted maximum %.4g must be > 0", fit.ErrInvalidInput, top.Estimate)}
	}
	o, err := FitOperational(partial, top.Estimate, confidence)
	if err != nil {
		return nil, &OperationalError{"partial", err}
	}
	return o, nil
}
