package fit

import (
	"fmt"
	"math"
)

// Activity is the call on a curve: does the compound do anything in the
// tested range?
type Activity string

// Activity calls.
const (
	// ActivityActive: the model explains the data better than a flat line
	// (F test P < Settings.ActivityAlpha) and, when the assay window is
	// known, the data show at least the minimum effect.
	ActivityActive Activity = "active"
	// ActivityInactive: a flat line explains the data as well (also when
	// the solver stopped without converging, singular or at its limit,
	// on a curve no better than the line), or the responses are
	// identical, or the effect is below the minimum. No potency is
	// reported.
	ActivityInactive Activity = "inactive"
	// ActivityInconclusive: the test could not be run (too few points), or
	// the data differ from a flat line but the fit did not converge.
	ActivityInconclusive Activity = "inconclusive"
)

// callActivity decides the activity of a filled Result and, for an
// inactive curve, withdraws the potency.
//
// The test is the extra-sum-of-squares F test of the fitted model (p free
// parameters) against a constant, the weighted mean (1 parameter):
//
//	F = ((TSS − RSS)/(p − 1)) / (RSS/(n − p)),  P = Pr(F(p − 1, n − p) > F)
//
// (Motulsky & Christopoulos 2004, Fitting Models to Biological Data Using
// Linear and Nonlinear Regression, Oxford University Press, ch. 22, the
// extra sum-of-squares F test; Bates & Watts 1988, §3.5). p counts every
// free parameter, including those that ended on a bound: a flat curve
// drives log_ec50 and hill to their bounds, and counting them there would
// shrink p − 1 and make the test liberal. The curve is active when
// P < α (Settings.ActivityAlpha, default 0.01) and, when Settings.Window is
// set, the data's own effect (Result.Effect: level means at the lowest and
// highest concentrations, not the fitted plateaus, which may be
// extrapolated) is at least Settings.MinEffect·Window. A fit that did not
// converge is tested on the best RSS it reached: no better than a flat
// line is inactive, better is inconclusive (the curve cannot be read).
func (r *Result) callActivity() {
	set, d := r.set, r.design
	r.ActivityP, r.Effect = math.NaN(), d.effect(set.curve.monotone)
	switch {
	case d.identical:
		r.inactive("all responses are identical: there is no response to fit")
		return
	case r.Status == StatusNotFitted:
		r.Activity = ActivityInconclusive
		r.Reason = "too few points to fit the model, so activity cannot be tested"
		return
	}
	p := set.freeCount()
	ft := FTest(d.tss, d.n-1, r.RSS, d.n-p)
	r.ActivityP = ft.P
	switch {
	case !r.Converged() && !math.IsNaN(ft.P) && !(ft.P < set.alpha):
		// The solver stopped without converging (on flat data typically
		// singular, top ≈ bottom leaving potency and slope unidentified,
		// or at its iteration limit wandering along that flat valley),
		// and even the best curve it reached does no better than a flat
		// line: there is no evidence of activity, and its potency means
		// nothing.
		r.addFlag(FlagNoResponse)
		r.inactive(fmt.Sprintf("no response: the best curve found fits no better than a flat line (F test P = %.3g ≥ α = %g; the solver stopped %s)", ft.P, set.alpha, r.Status))
		return
	case !r.Converged():
		r.Activity = ActivityInconclusive
		r.Reason = fmt.Sprintf("the data differ from a flat line (F test P = %.3g) but the fit did not converge (%s), so the curve cannot be read", ft.P, r.Status)
		if math.IsNaN(ft.P) {
			r.Reason = fmt.Sprintf("the fit did not converge (%s), so activity cannot be tested", r.Status)
		}
		return
	case math.IsNaN(ft.P):
		r.Activity = ActivityInconclusive
		r.Reason = fmt.Sprintf("the F test against a flat line needs more points than the model's %d free parameters and at least 2 of them", p)
		return
	case !(ft.P < set.alpha):
		r.addFlag(FlagNoResponse)
		r.inactive(fmt.Sprintf("no response: the curve fits no better than a flat line (F test P = %.3g ≥ α = %g)", ft.P, set.alpha))
		return
	}
	if least := set.minEffect * set.window; set.window > 0 && !(math.Abs(r.Effect) >= least) {
		r.inactive(fmt.Sprintf("the effect in the data, %.3g, is below the minimum %.3g (%g of the assay window %g)",
			math.Abs(r.Effect), least, set.minEffect, set.window))
		return
	}
	r.Activity = ActivityActive
	r.Reason = fmt.Sprintf("the curve fits better than a flat line (F test P = %.3g < α = %g)", ft.P, set.alpha)
	if set.window > 0 {
		r.Reason += fmt.Sprintf(" with an effect of %.3g, at least %g of the assay window %g", math.Abs(r.Effect), set.minEffect, set.window)
	}
	r.qualify()
}

// inactive calls the curve inactive and withdraws every potency parameter
// (log_ec50, and Bell's log_ic50): estimate, SE and intervals become NaN,
// and so do EC50 and pEC50. The other parameters stay as fitted.
func (r *Result) inactive(reason string) {
	r.Activity, r.Reason = ActivityInactive, reason
	for j, p := range r.set.curve.params {
		if p.bound != boundPotency {
			continue
		}
		nan := math.NaN()
		q := &r.Params[j]
		q.Estimate, q.SE, q.WaldLo, q.WaldHi, q.BootLo, q.BootHi = nan, nan, nan, nan, nan, nan
	}
	r.Qualifier, r.Bound = "", math.NaN()
}

// qualify sets the qualifier of an active curve's EC50: ">" with the
// highest tested concentration when log_ec50 lies above it, "<" with the
// lowest when below, "=" inside, the way screening results are reported
// ("pIC50 < 4.5").
func (r *Result) qualify() {
	r.Qualifier, r.Bound = "=", math.NaN()
	lo, hi, ok := r.design.finiteRange()
	L := r.LogEC50().Estimate
	switch {
	case !ok || math.IsNaN(L):
		r.Qualifier = ""
	case L > hi:
		r.Qualifier, r.Bound = ">", math.Pow(10, hi)
	case L < lo:
		r.Qualifier, r.Bound = "<", math.Pow(10, lo)
	}
}

// effect is the response change the data show, from the level mean at the
// lowest concentration (the vehicle when there is one): to the level mean
// at the highest concentration for a monotone model, to the level mean
// farthest from it otherwise (Bell's peak). NaN with fewer than two levels.
func (d *design) effect(monotone bool) float64 {
	if len(d.x) < 2 {
		return math.NaN()
	}
	first := d.ybar[0]
	if monotone {
		return d.ybar[len(d.ybar)-1] - first
	}
	var e float64
	for _, y := range d.ybar[1:] {
		if math.Abs(y-first) > math.Abs(e) {
			e = y - first
		}
	}
	return e
}
