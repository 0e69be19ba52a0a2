package fit

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"sluice/fit/lm"
)

// Fit fits one curve. The error is non-nil only for invalid input (a
// *PointError or *SettingError wrapping ErrInvalidInput); a fit that fails on
// valid data returns a Result whose Status and Flags say why.
func Fit(c Curve, s *Settings) (*Result, error) {
	set, err := s.resolve()
	if err != nil {
		return nil, err
	}
	if err := validatePoints(c.Points); err != nil {
		return nil, err
	}
	d := newDesign(c.Points)
	return fitDesign(c.ID, set, d), nil
}

// fitDesign fits a validated, grouped curve from its self-start values,
// trying further starts when the first does not converge cleanly, and keeps
// the converged solution with the smallest RSS.
func fitDesign(id string, set *resolved, d *design) *Result {
	names := set.curve.names()
	r := &Result{Curve: id, Model: set.model, N: d.n, Levels: len(d.x), Confidence: set.confidence,
		Qualifier: "", Bound: math.NaN(), ActivityP: math.NaN(), Effect: math.NaN(),
		PlateauZero: math.NaN(), PlateauHigh: math.NaN(), set: set, design: d}
	p := set.freeCount()
	if d.n <= p || len(d.x) < p {
		r.Status = StatusNotFitted
		r.Params = make([]Param, len(names))
		for j, n := range names {
			nan := math.NaN()
			r.Params[j] = Param{Name: n, Estimate: nan, SE: nan, WaldLo: nan, WaldHi: nan,
				BootLo: nan, BootHi: nan, Fixed: set.fixed[j]}
			if set.fixed[j] {
				r.Params[j].Estimate = set.fixedValue[j]
			}
		}
		r.RSS, r.Sigma, r.R2, r.AICc = math.NaN(), math.NaN(), math.NaN(), math.NaN()
		r.addFlag(FlagTooFewPoints)
		r.addFlag(FlagFitFailed)
		r.callActivity()
		r.checkPlausible()
		return r
	}
	// A model with a twin (Hill) has one optimum up to the twin: its first
	// start usually suffices. A model without one searches (search.go).
	var best lm.Result
	var iters, evals int
	var nested *Result
	if set.curve.twin {
		iters, evals = localFit(set, d, &best)
	} else {
		iters, evals, nested = searchFit(set, d, &best)
	}
	r.Iterations, r.evaluations = iters, evals
	if nested != nil {
		r.evaluations += nested.evaluations
	}
	// The twin is mapped only when the map keeps every fixed parameter
	// at its value: with hill fixed, (top, bottom, −hill) would report a
	// slope that was not the one given.
	if ro := set.curve.roles; set.curve.twin && !set.fixed[ro.Bottom] && !set.fixed[ro.Top] && !set.fixed[ro.Hill] {
		canonicalTwin(&best, ro)
	}
	r.fill(&best)
	if nested != nil {
		r.Comparison = compareNested(nested, r)
	}
	return r
}

// localFit fits from the model's starts in turn, stopping at the first
// that converges off the bounds, and leaves the best solution in best: the
// converged one with the smallest RSS.
func localFit(set *resolved, d *design, best *lm.Result) (iters, evals int) {
	sv := newSolver(set, d, false)
	haveBest := false
	for i, st := range startValues(set, d) {
		status := sv.solve(d.ybar, d.w, st)
		iters += sv.res.Iterations
		evals += sv.res.Evaluations
		if !haveBest || better(&sv.res, best) {
			copyLMResult(best, &sv.res)
			haveBest = true
		}
		// The first start usually suffices; try more only when it fails or
		// ends on a bound (a local solution there is common).
		if i == 0 && status.Converged() && !sv.anyAtBound() {
			break
		}
	}
	return iters, evals
}

// better reports whether a solution beats the best so far: a converged one
// beats one that is not, and otherwise the RSS decides. A later solution
// replaces the best only when clearly better: two forms of one step (a
// slope on its bound) tie to rounding, and the earlier start's is kept.
func better(a, best *lm.Result) bool {
	if a.Status.Converged() != best.Status.Converged() {
		return a.Status.Converged()
	}
	return a.RSS < best.RSS*(1-tieRSS)
}

// canonicalTwin resolves the symmetry of a model with a twin (Hill's):
// (bottom, top, hill) and (top, bottom, −hill) describe the same curve.
// Sluice reports bottom as the lower plateau and lets the sign of hill give
// the direction, so a solution with top < bottom is mapped to its twin,
// covariance included (the map is linear: a permutation and a sign).
func canonicalTwin(r *lm.Result, ro Roles) {
	x := r.X
	if !(x[ro.Top] < x[ro.Bottom]) {
		return
	}
	x[ro.Bottom], x[ro.Top], x[ro.Hill] = x[ro.Top], x[ro.Bottom], -x[ro.Hill]
	r.AtBound[ro.Bottom], r.AtBound[ro.Top] = r.AtBound[ro.Top], r.AtBound[ro.Bottom]
	np := len(x)
	perm := func(j int) int {
		switch j {
		case ro.Bottom:
			return ro.Top
		case ro.Top:
			return ro.Bottom
		}
		return j
	}
	sign := func(j int) float64 {
		if j == ro.Hill {
			return -1
		}
		return 1
	}
	for _, m := range [][]float64{r.Unscaled, r.Cov} {
		old := append([]float64(nil), m...)
		for i := 0; i < np; i++ {
			for j := 0; j < np; j++ {
				m[i*np+j] = sign(i) * sign(j) * old[perm(i)*np+perm(j)]
			}
		}
	}
}

func copyLMResult(dst, src *lm.Result) {
	dst.X = append(dst.X[:0], src.X...)
	dst.AtBound = append(dst.AtBound[:0], src.AtBound...)
	dst.Unscaled = append(dst.Unscaled[:0], src.Unscaled...)
	dst.Cov = append(dst.Cov[:0], src.Cov...)
	dst.Status, dst.Iterations, dst.Evaluations, dst.RSS, dst.DOF = src.Status, src.Iterations, src.Evaluations, src.RSS, src.DOF
}

// fill turns a solver result into the statistics, intervals and flags.
func (r *Result) fill(lr *lm.Result) {
	set, d := r.set, r.design
	names := set.curve.names()
	np := len(names)
	r.Solver = lr.Status
	r.Status = StatusConverged
	if !lr.Status.Converged() {
		r.Status = lr.Status.String()
		r.addFlag(FlagFitFailed)
	}
	k := 0
	for j := range names {
		if !set.fixed[j] && !lr.AtBound[j] {
			k++
		}
	}
	r.DOF = d.n - k
	r.RSS = lr.RSS + d.pureSS
	sigma2 := math.NaN()
	if r.DOF > 0 {
		sigma2 = r.RSS / float64(r.DOF)
	}
	r.Sigma = math.Sqrt(sigma2)
	r.R2 = 1 - r.RSS/d.tss
	r.AICc = AICc(d.n, r.RSS, k)
	if math.IsNaN(r.AICc) {
		r.addFlag(FlagAICcUndefined)
		r.addNote("AICc is undefined: %d points leave n − K − 1 = %d ≤ 0 for K = %d (the %d estimated parameters and σ²), so model comparisons by AICc cannot decide", d.n, d.n-k-2, k+1, k)
	}
	r.Cov = make([]float64, np*np)
	for i, v := range lr.Unscaled {
		r.Cov[i] = sigma2 * v
	}
	t := math.NaN()
	if r.DOF > 0 {
		t = distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(r.DOF)}.Quantile((1 + set.confidence) / 2)
	}
	r.Params = make([]Param, np)
	for j, name := range names {
		p := Param{Name: name, Estimate: lr.X[j], Fixed: set.fixed[j], AtBound: lr.AtBound[j],
			BootLo: math.NaN(), BootHi: math.NaN()}
		p.SE = math.NaN()
		if !p.Fixed && !p.AtBound && r.Converged() {
			p.SE = math.Sqrt(r.Cov[j*np+j])
		}
		p.WaldLo, p.WaldHi = p.Estimate-t*p.SE, p.Estimate+t*p.SE
		if p.Fixed {
			p.WaldLo, p.WaldHi = p.Estimate, p.Estimate
		}
		r.Params[j] = p
	}
	r.fitted = append([]float64(nil), lr.X...)
	if !set.curve.admits(lr.X) {
		r.addFlag(FlagShapeNotAdmitted)
		r.addNote("the best %s fit is not the shape the model stands for (for bell: a peak, activation before block), so its plateaus and potencies do not mean what their names say; see the comparison with hill", set.model)
	}
	r.PlateauZero, r.PlateauHigh, r.Direction = plateausOf(set.curve, lr.X)
	r.flagShape()
	r.callActivity()
	r.checkPlausible()
}

// flagShape adds the flags that read the fitted curve against the design.
func (r *Result) flagShape() {
	set, d := r.set, r.design
	ro := set.curve.roles
	lower := make([]float64, len(r.Params))
	upper := make([]float64, len(r.Params))
	set.bounds(d, lower, upper)
	for j, p := range r.Params {
		if p.AtBound {
			r.addFlag(FlagParameterAtBound)
			if set.curve.isSlope(j) {
				r.addFlag(FlagHillAtBound)
			}
		}
		// A potency on its search box is not located by the data, whether
		// or not the solver marked it at the bound (a flat direction ends
		// there with a zero gradient).
		if set.curve.params[j].bound == boundPotency && !p.Fixed && atEdge(p.Estimate, lower[j], upper[j]) {
			r.addFlag(FlagParameterAtBound)
			if j == ro.LogEC50 {
				r.addFlag(FlagEC50AtLimit)
			}
		}
	}
	lo, hi, ok := d.finiteRange()
	if !ok {
		return
	}
	L := r.Params[ro.LogEC50].Estimate
	if L < lo || L > hi {
		r.addFlag(FlagEC50OutsideRange)
	}
	if set.curve.monotone {
		r.flagPlateaus(hi)
	}
}

// flagPlateaus checks that a monotone curve's data reach both plateaus.
// With q the fraction of the fitted window, measured from the
// zero-concentration plateau towards the high one,
//
//	q(y) = (y − PlateauZero)/(PlateauHigh − PlateauZero),
//
// the far plateau is reached when both the fitted curve and the data's own
// plateau (the level mean) at the highest tested concentration have
// q ≥ 0.8, and the near plateau when both at the lowest level (the vehicle
// when there is one) have q ≤ 0.2 (common practice: 80 % of the window
// covered). Reading the data as well as the curve catches a fit whose
// plateau is extrapolated beyond what was measured. The flags name the
// plateau by its place, upper or lower: top_not_reached for the upper one,
// bottom_not_reached for the lower.
func (r *Result) flagPlateaus(hi float64) {
	set, d := r.set, r.design
	z, h := r.PlateauZero, r.PlateauHigh
	if !(h != z) || math.IsNaN(h-z) {
		return
	}
	q := func(y float64) float64 { return (y - z) / (h - z) }
	th := r.theta()
	last := len(d.x) - 1
	farFit, farData := q(set.curve.value(th, hi, nil)), q(d.ybar[last])
	nearFit, nearData := q(set.curve.value(th, d.x[0], nil)), q(d.ybar[0])
	// Rising: the far (high-concentration) plateau is the upper one.
	far, near := FlagTopNotReached, FlagBottomNotReached
	if h < z {
		far, near = near, far
	}
	if math.Min(farFit, farData) < farPlateauFraction {
		r.addFlag(far)
	}
	if math.Max(nearFit, nearData) > 1-farPlateauFraction {
		r.addFlag(near)
	}
}

// atEdge reports whether v lies on lo or hi, to 1e-9 of the box's width.
func atEdge(v, lo, hi float64) bool {
	tol := 1e-9 * math.Max(1, hi-lo)
	return math.Abs(v-lo) <= tol || math.Abs(v-hi) <= tol
}

// theta returns the estimates as fitted, before an inactive curve's potency
// is withdrawn: the parameters of the curve the solver found.
func (r *Result) theta() []float64 {
	if r.fitted != nil {
		return append([]float64(nil), r.fitted...)
	}
	return r.Estimates()
}

// tieRSS is the relative RSS difference below which two solutions of a
// search tie: far below any difference that matters (search_test.go holds
// the search to 1e-8 of a many-start reference) and above rounding, which
// reaches 1e-12 of the RSS when the curve fits to a few digits below
// the data's own (a noise-free step: RSS ≈ 1e-8·TSS).
const tieRSS = 1e-10

// farPlateauFraction is the share of the window the data must cover at
// either end for the plateau flags (top_not_reached, bottom_not_reached).
const farPlateauFraction = 0.8
