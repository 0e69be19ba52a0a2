package fit

import (
	"fmt"
	"math"

	"sluice/fit/lm"
)

// Status words of a Result.
const (
	// StatusConverged: the solver found a least-squares solution.
	StatusConverged = "converged"
	// StatusNotFitted: the data cannot determine the model (see Flags).
	StatusNotFitted = "not_fitted"
)

// Param is one fitted parameter.
type Param struct {
	Name     string
	Estimate float64
	// SE is the asymptotic standard error, NaN for a fixed or at-bound
	// parameter or a failed fit.
	SE float64
	// WaldLo and WaldHi are Estimate ∓ t(dof, (1+confidence)/2)·SE.
	WaldLo, WaldHi float64
	// BootLo and BootHi are the bootstrap interval, NaN without bootstrap.
	BootLo, BootHi float64
	// BootInterval is the method behind BootLo and BootHi: the one asked
	// for, except that an estimate on a bound gets the percentile interval
	// instead of BCa (bootstrap.go); "" without bootstrap or when fixed.
	BootInterval   Interval
	Fixed, AtBound bool
}

// Result is a fitted curve.
type Result struct {
	Curve string
	Model Model
	// Status is StatusConverged, StatusNotFitted, or the solver's status
	// word (lm.Status.String) when it did not converge.
	Status string
	// Solver is the solver's own status.
	Solver lm.Status
	Params []Param
	// Cov is the covariance σ²(JᵀWJ)⁻¹, row-major over Params, with zero
	// rows and columns for fixed and at-bound parameters.
	Cov []float64
	// N counts points, Levels distinct concentrations, DOF = N − p for p
	// estimated parameters.
	N, Levels, DOF int
	// RSS is Σw(y − f)²; Sigma = √(RSS/DOF); R2 = 1 − RSS/TSS; AICc as in
	// FACTS §1 (Hurvich & Tsai 1989), with K = p + 1.
	RSS, Sigma, R2, AICc float64
	Iterations           int
	Confidence           float64
	// Flags are plain-word warnings, e.g. FlagTopNotReached.
	Flags []string
	// Boot is the bootstrap summary, nil without resampling.
	Boot *BootSummary

	// Activity is the call on the curve (activity.go): active, inactive or
	// inconclusive; Reason says why in words. An inactive curve reports no
	// potency: the potency parameters (log_ec50, and Bell's log_ic50) are
	// NaN with their intervals, so EC50 and pEC50 are NaN too, while Status
	// stays the solver's.
	Activity Activity
	Reason   string
	// ActivityP is the P value of the F test of the model against a flat
	// line, NaN when it could not be run.
	ActivityP float64
	// Effect is the response change the data show: the level mean at the
	// highest concentration minus that at the lowest (for Bell, the level
	// mean farthest from the lowest); NaN with fewer than two levels.
	Effect float64
	// Qualifier reads the EC50 of an active curve: "=" inside the tested
	// range, ">" above the highest tested concentration, "<" below the
	// lowest, with Bound that concentration (molar; NaN for "=").
	// Qualifier is "" and Bound NaN when no EC50 is reported.
	Qualifier string
	Bound     float64
	// PlateauZero is the fitted response at zero concentration and
	// PlateauHigh its limit at high concentration; Direction says whether
	// the curve rises or falls between them (for Bell, whether it rises or
	// falls towards its peak). They cannot be misread the way bottom and
	// top can: bottom and top are the model's parameters (kept for
	// pipelines) and for Hill5 with hill < 0 bottom is the plateau at high
	// concentration, whichever is larger.
	PlateauZero, PlateauHigh float64
	Direction                Direction
	// Comparison is the test of the model against the Hill equation it
	// nests, for models other than Hill (nil for Hill).
	Comparison *Comparison
	// Notes explain in sentences the flags that need more than a word
	// (FlagImplausibleConc, FlagAICcUndefined).
	Notes []string

	set    *resolved
	design *design
	// evaluations counts the solver's evaluations over every start,
	// the nested Hill fit's included (the cost model's measure).
	evaluations int
	// fitted is the solver's estimate, kept whole when an inactive
	// curve's potency is withdrawn from Params.
	fitted []float64
}

// Flags a Result may carry.
const (
	FlagTooFewPoints      = "too_few_points"
	FlagFitFailed         = "fit_failed"
	FlagParameterAtBound  = "parameter_at_bound"
	FlagHillAtBound       = "hill_at_bound"
	FlagEC50OutsideRange  = "ec50_outside_tested_range"
	FlagTopNotReached     = "top_not_reached"
	FlagBottomNotReached  = "bottom_not_reached"
	FlagNoResponse        = "no_response"
	FlagBootstrapFailures = "bootstrap_refits_failed"
	FlagBootstrapAtBound  = "bootstrap_resamples_at_bound"
	// FlagEC50AtLimit: log_ec50 ended on its search box (the tested range
	// widened by Settings.PotencyMargin): the data do not locate it.
	FlagEC50AtLimit = "ec50_at_search_limit"
	// FlagImplausibleConc: a concentration or the EC50 lies outside the
	// plausible range of drug concentrations (plausible.go); see Notes.
	FlagImplausibleConc = "implausible_concentration"
	// FlagAICcUndefined: n − K − 1 ≤ 0, so AICc is NaN (see Notes).
	FlagAICcUndefined = "aicc_undefined"
	// FlagShapeNotAdmitted: the best solution lies where the model's
	// parameters do not mean what their names say (Bell: a dip, or the
	// block before the activation; see Notes and Comparison).
	FlagShapeNotAdmitted = "shape_not_admitted"
)

// Converged reports whether the fit found a least-squares solution.
func (r *Result) Converged() bool { return r.Status == StatusConverged }

// Param returns the named parameter.
func (r *Result) Param(name string) (Param, bool) {
	for _, p := range r.Params {
		if p.Name == name {
			return p, true
		}
	}
	return Param{}, false
}

// Estimates returns the parameter estimates in model order.
func (r *Result) Estimates() []float64 {
	v := make([]float64, len(r.Params))
	for i, p := range r.Params {
		v[i] = p.Estimate
	}
	return v
}

// spec returns the fit's model definition: the one it was fitted with, or
// for a Result built by hand the built-in model of its name.
func (r *Result) spec() *Spec {
	if r.set != nil {
		return r.set.curve
	}
	return r.Model.Spec()
}

// LogEC50 returns log10(EC50/M); for every model it is the parameter
// log_ec50 (for Hill5 the half-maximal concentration; for Bell that of the
// rising term).
func (r *Result) LogEC50() Param { return r.Params[r.spec().roles.LogEC50] }

// Bottom returns the parameter bottom: the lower plateau of a Hill fit
// (reported with bottom < top), but for a model without a twin it is only
// the model's parameter (Hill5 with hill < 0 has bottom at high
// concentration, whichever is larger); PlateauZero, PlateauHigh and
// Direction name the plateaus by place.
func (r *Result) Bottom() Param { return r.Params[r.spec().roles.Bottom] }

// Top returns the parameter top (see Bottom).
func (r *Result) Top() Param { return r.Params[r.spec().roles.Top] }

// HillSlope returns the slope parameter of the rise, hill: > 0 for a curve
// that rises with concentration.
func (r *Result) HillSlope() Param { return r.Params[r.spec().roles.Hill] }

// HasPotency reports whether the result reports an EC50: a converged fit
// of a curve that is not inactive.
func (r *Result) HasPotency() bool {
	return r.Converged() && r.Activity != ActivityInactive && !math.IsNaN(r.LogEC50().Estimate)
}

// EC50 returns the EC50 in molar with its interval: the bootstrap interval
// of log_ec50 when there is one, else the Wald interval, back-transformed
// (FACTS §8: a log interval back-transforms asymmetrically).
func (r *Result) EC50() (est, lo, hi float64) {
	p := r.LogEC50()
	lo, hi = p.WaldLo, p.WaldHi
	if r.Boot != nil {
		lo, hi = p.BootLo, p.BootHi
	}
	return math.Pow(10, p.Estimate), math.Pow(10, lo), math.Pow(10, hi)
}

// LogECF returns log10 of the concentration giving F % of the response from
// the zero-concentration plateau towards the other end of the window,
// 0 < F < 100 (Spec.LogECF; FACTS §1 for Hill: log EC_F = log EC50 +
// log10(F/(100 − F))/|hill|; for Hill5 by solving the curve for the
// fraction; for Bell on the rising limb, from bottom to the peak). It
// returns NaN for F outside (0, 100).
func (r *Result) LogECF(F float64) float64 {
	return r.spec().LogECF(r.Estimates(), F)
}

func (r *Result) addNote(format string, args ...any) {
	r.Notes = append(r.Notes, fmt.Sprintf(format, args...))
}

func (r *Result) addFlag(f string) {
	for _, g := range r.Flags {
		if g == f {
			return
		}
	}
	r.Flags = append(r.Flags, f)
}
