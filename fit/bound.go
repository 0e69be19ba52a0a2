package fit

import "math"

// bound is the default box of one model parameter, given the tested range
// and the settings.
type bound uint8

const (
	// boundFree is no bound (the plateaus).
	boundFree bound = iota
	// boundPotency is the tested range of log10 concentration (the vehicle
	// left out) widened by Settings.PotencyMargin decades on each side, so
	// that a curve with no response cannot send its potency to infinity.
	boundPotency
	// boundSlope is [−MaxHill, MaxHill] (Settings.MaxHill): the slope of a
	// curve that may rise or fall.
	boundSlope
	// boundRisingSlope is [minRisingSlope, MaxHill]: a slope that must stay
	// positive, e.g. both slopes of Bell, so that it rises before it falls.
	boundRisingSlope
	// boundBox is the fixed box [param.lo, param.hi].
	boundBox
)

// minRisingSlope is the lower end of boundRisingSlope.
const minRisingSlope = 0.01

// param is one parameter of a model: its name (as in JSON and in
// Settings.Fixed) and its default bound; lo and hi are the box of a
// boundBox and unused otherwise.
type param struct {
	name   string
	bound  bound
	lo, hi float64
}

// isSlope reports whether the parameter is bounded by Settings.MaxHill:
// such a parameter is a slope, and a fit that ends on its bound is flagged
// hill_at_bound.
func (p param) isSlope() bool { return p.bound == boundSlope || p.bound == boundRisingSlope }

// box returns the parameter's bound for the tested range [lo, hi] of log10
// concentration, the potency margin and the slope bound.
func (p param) box(lo, hi, margin, maxHill float64) (float64, float64) {
	switch p.bound {
	case boundPotency:
		return lo - margin, hi + margin
	case boundSlope:
		return -maxHill, maxHill
	case boundRisingSlope:
		return minRisingSlope, maxHill
	case boundBox:
		return p.lo, p.hi
	}
	return math.Inf(-1), math.Inf(1)
}
