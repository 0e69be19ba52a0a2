package fit

import "math"

// Direction says which way a fitted curve goes from its zero-concentration
// plateau as the concentration rises.
type Direction string

// Directions of a Result.
const (
	// Rising: the response grows with concentration (an agonist; Bell
	// always rises before it falls).
	Rising Direction = "rising"
	// Falling: the response drops with concentration (an inhibitor or an
	// antagonist).
	Falling Direction = "falling"
	// Flat: no direction, when the fit has no window or did not run.
	Flat Direction = ""
)

// PotencyLabel returns the name of the potency for a curve going this way:
// "IC50" for a falling curve, "EC50" otherwise. The wire keeps ec50 and
// log_ec50 for every curve and adds ic50 and pic50 for falling ones, so
// that pipelines read the same fields whatever the direction.
func (d Direction) PotencyLabel() string {
	if d == Falling {
		return "IC50"
	}
	return "EC50"
}

// plateausOf returns the fitted response at zero concentration and its limit
// at high concentration, and the direction between them: the model is
// evaluated at x = −Inf and x = +Inf, where every Sluice model has its
// plateaus (Hill5's and Hill's with the sign of hill; Bell's both equal
// bottom, so its direction is that of top − bottom, towards its peak).
func plateausOf(s *Spec, theta []float64) (zero, high float64, dir Direction) {
	zero = s.curve(theta, math.Inf(-1), nil)
	high = s.curve(theta, math.Inf(1), nil)
	ro := s.roles
	toward := high - zero
	if !s.monotone {
		toward = theta[ro.Top] - theta[ro.Bottom]
	}
	switch {
	case toward > 0:
		dir = Rising
	case toward < 0:
		dir = Falling
	}
	return zero, high, dir
}
