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
		set: set, design: d}
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
		return r
	}
	sv := newSolver(set, d, false)
	var best lm.Result
	haveBest := false
	iters := 0
	for i, st := range startValues(set, d) {
		status := sv.solve(d.ybar, d.w, st)
		iters += sv.res.Iterations
		better := !haveBest ||
			(status.Converged() && !best.Status.Converged()) ||
			(status.Converged() == best.Status.Converged() && sv.res.RSS < best.RSS)
		if better {
			copyLMResult(&best, &sv.res)
			haveBest = true
		}
		// The first start usually suffices; try more only when it fails or
		// ends on a bound (a local solution there is common).
		if i == 0 && status.Converged() && !sv.anyAtBound() {
			break
		}
	}
	r.Iterations = iters
	if ro := set.curve.roles; set.curve.twin && !set.fixed[ro.Bottom] && !set.fixed[ro.Top] {
		canonicalTwin(&best, ro)
	}
	r.fill(&best)
	return r
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
	r.flagShape()
}

// flagShape adds the flags that read the fitted curve against the design.
func (r *Result) flagShape() {
	set, d := r.set, r.design
	ro := set.curve.roles
	for j, p := range r.Params {
		if p.AtBound {
			r.addFlag(FlagParameterAtBound)
			if set.curve.isSlope(j) {
				r.addFlag(FlagHillAtBound)
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
	// Far plateau: at the highest tested concentration a monotone curve
	// should have covered at least 80 % of its window (common practice).
	if set.curve.monotone {
		h := r.Params[ro.Hill].Estimate
		th := r.Estimates()
		b, t := th[ro.Bottom], th[ro.Top]
		if t != b {
			q := (set.curve.value(th, hi, nil) - b) / (t - b)
			if h < 0 {
				q = 1 - q
			}
			if q < farPlateauFraction {
				if h >= 0 {
					r.addFlag(FlagTopNotReached)
				} else {
					r.addFlag(FlagBottomNotReached)
				}
			}
		}
	}
	// No response: the curve explains no more than a horizontal line, by the
	// extra-sum-of-squares F test against the weighted mean (FACTS §1).
	if k := r.N - r.DOF; k > 1 && r.DOF > 0 && r.Converged() {
		if p := FTest(d.tss, r.N-1, r.RSS, r.DOF).P; !(p < noResponseAlpha) {
			r.addFlag(FlagNoResponse)
		}
	}
}

// farPlateauFraction and noResponseAlpha are the thresholds of the
// top_not_reached/bottom_not_reached and no_response flags.
const (
	farPlateauFraction = 0.8
	noResponseAlpha    = 0.05
)
