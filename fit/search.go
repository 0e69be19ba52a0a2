package fit

import (
	"math"

	"sluice/fit/lm"
)

// A model without Hill's twin (Hill5, Bell, a model from a local registry)
// has several local optima that are different curves: Hill5's mirrored form,
// (bottom, top, hill, s) against (top, bottom, −hill, s), has the same
// plateaus and direction but its asymmetry bends the other end of the
// curve, and either may fit better. Its fit therefore searches instead of
// stopping at the first clean solution: every start of the model, each
// start's mirror where the slope may change sign, and starts from the Hill
// fit the model nests (its estimate, with the model's other parameters at
// values where the model reduces to, or approaches, Hill). The nested
// starts make the result never worse than the Hill fit; the search is
// checked against a many-start reference in search_test.go.
//
// To keep that affordable every start runs to at most searchMaxIterations
// steps (a start still far from a solution then is not worth more); the
// best is then polished to full precision with the caller's settings.

// searchMaxIterations bounds each start of a search when the caller's
// solver settings give no smaller limit.
const searchMaxIterations = 100

// primaryStarts is how many of the model's own starts a search tries
// first (with their mirrors and the nested starts); the rest are tried
// only when none of those converges off the bounds.
const primaryStarts = 1

// searchFit fits a model without a twin by the search above and leaves the
// polished best solution in best. nested is the Hill fit it started from,
// nil when there is none.
func searchFit(set *resolved, d *design, best *lm.Result) (iters, evals int, nested *Result) {
	own := startValues(set, d)
	more, nested := nestedStarts(set, d)
	n := min(len(own), primaryStarts)
	first := withMirrors(set, append(append([][]float64(nil), own[:n]...), more...))
	rest := withMirrors(set, own[n:])
	clampStarts(set, d, first)
	clampStarts(set, d, rest)

	capped := lm.Settings{}
	if set.solver != nil {
		capped = *set.solver
	}
	if capped.MaxIterations == 0 || capped.MaxIterations > searchMaxIterations {
		capped.MaxIterations = searchMaxIterations
	}
	capped.MaxEvaluations = 0
	sv := newSolver(set, d, false)
	sv.lmSet = &capped
	var cand lm.Result
	have := false
	try := func(starts [][]float64) {
		for _, st := range starts {
			sv.solve(d.ybar, d.w, st)
			iters += sv.res.Iterations
			evals += sv.res.Evaluations
			if !have || promising(set.curve, &sv.res, &cand) {
				copyLMResult(&cand, &sv.res)
				have = true
			}
		}
	}
	try(first)
	if !cand.Status.Converged() || anyTrue(cand.AtBound) || !set.curve.admits(cand.X) {
		try(rest)
	}
	if set.model == Bell && nested != nil && nested.Converged() {
		// Bell's admissible optimum may lie on the edge of its family,
		// where the unconstrained solve does not stop (it crosses the
		// block below the activation): the Hill limit, with the block
		// held beyond the tested range, is always a candidate.
		if lim := bellHillLimit(set, d, nested, &capped); promising(set.curve, lim, &cand) {
			iters += lim.Iterations
			evals += lim.Evaluations
			copyLMResult(&cand, lim)
		}
	}
	// A candidate that converged under the cap is what the caller's
	// settings give; one that did not is polished from where it stopped,
	// and kept as it was if polishing does not converge either.
	copyLMResult(best, &cand)
	if !cand.Status.Converged() {
		full := newSolver(set, d, false)
		full.solve(d.ybar, d.w, cand.X)
		iters += full.res.Iterations
		evals += full.res.Evaluations
		if set.curve.admits(full.res.X) == set.curve.admits(cand.X) && (full.res.Status.Converged() || full.res.RSS < cand.RSS) {
			copyLMResult(best, &full.res)
		}
	}
	return iters, evals, nested
}

// promising reports whether a capped solve beats the candidate so far. A
// solution the model admits (Spec.admissible) beats one it does not; then
// the RSS decides, whatever the status (a solve that ran out of steps may
// be going somewhere good, and a rank-deficient end is still a
// least-squares value of the family); within tieRSS a converged solve
// beats one that is not, and otherwise the earlier is kept.
func promising(s *Spec, a, cand *lm.Result) bool {
	if aa, ca := s.admits(a.X), s.admits(cand.X); aa != ca {
		return aa
	}
	switch {
	case math.IsNaN(a.RSS):
		return false
	case math.IsNaN(cand.RSS):
		return true
	case a.RSS < cand.RSS*(1-tieRSS):
		return true
	case a.RSS <= cand.RSS*(1+tieRSS):
		return a.Status.Converged() && !cand.Status.Converged()
	}
	return false
}

// bellHillLimit fits Bell with the block held at the upper end of its box
// (log_ic50 = the tested range's top + the potency margin, hill_block = 1),
// from the nested Hill fit: Bell's limit towards Hill, admissible whatever
// the data. The two held parameters are reported at their bound.
func bellHillLimit(set *resolved, d *design, hill *Result, lmSet *lm.Settings) *lm.Result {
	np := len(set.fixed)
	lower, upper := make([]float64, np), make([]float64, np)
	set.bounds(d, lower, upper)
	held := *set
	held.fixed = append([]bool(nil), set.fixed...)
	held.fixedValue = append([]float64(nil), set.fixedValue...)
	held.fixed[iLogIC], held.fixedValue[iLogIC] = true, upper[iLogIC]
	if !set.fixed[iHillBlock] {
		held.fixed[iHillBlock], held.fixedValue[iHillBlock] = true, 1
	}
	th := hill.Estimates()
	start := []float64{th[iBottom], th[iTop], th[iLogEC], th[iHill], upper[iLogIC], 1}
	clampStarts(&held, d, [][]float64{start})
	sv := newSolver(&held, d, false)
	sv.lmSet = lmSet
	sv.solve(d.ybar, d.w, start)
	res := new(lm.Result)
	copyLMResult(res, &sv.res)
	res.AtBound[iLogIC] = true
	res.AtBound[iHillBlock] = !set.fixed[iHillBlock]
	return res
}

func anyTrue(b []bool) bool {
	for _, v := range b {
		if v {
			return true
		}
	}
	return false
}

// nestedStarts returns starts for a model without a twin built from the
// Hill fit of the same data: Hill's four estimates in the model's roles,
// the model's other parameters taken from each of its own starts, and for
// Hill5 the asymmetry 1 (where Hill5 is Hill), 0.5 and 2. The Hill fit is
// returned too, for the comparison, or nil when it cannot be made (the
// model does not share Hill's fixed parameters, or too few points).
func nestedStarts(set *resolved, d *design) (starts [][]float64, hill *Result) {
	hs := hillSpec()
	hset := &resolved{model: Hill, curve: hs, confidence: set.confidence, maxHill: set.maxHill, margin: set.margin,
		alpha: set.alpha, window: set.window, minEffect: set.minEffect, solver: set.solver,
		fixed: make([]bool, len(hs.params)), fixedValue: make([]float64, len(hs.params))}
	names := set.curve.names()
	for j, f := range set.fixed {
		if !f {
			continue
		}
		k := indexOf(hs.names(), names[j])
		if k < 0 {
			continue // a parameter Hill lacks (asymmetry, log_ic50): its fixed value is set in every start anyway
		}
		hset.fixed[k], hset.fixedValue[k] = true, set.fixedValue[j]
	}
	if d.n <= hset.freeCount() || len(d.x) < hset.freeCount() {
		return nil, nil
	}
	hill = fitDesign("", hset, d)
	if !hill.Converged() {
		return nil, hill
	}
	th := hill.Estimates()
	ro := set.curve.roles
	own := set.curve.starts(set, d)
	lower := make([]float64, len(names))
	upper := make([]float64, len(names))
	set.bounds(d, lower, upper)
	base := func(src []float64) []float64 {
		st := append([]float64(nil), src...)
		st[ro.Bottom], st[ro.Top], st[ro.LogEC50], st[ro.Hill] = th[iBottom], th[iTop], th[iLogEC], th[iHill]
		return st
	}
	switch set.model {
	case Hill5:
		for _, s := range []float64{1, 0.5, 2} {
			st := base(own[0])
			st[iAsym] = s
			starts = append(starts, st)
		}
	case Bell:
		// Bell rises then falls: Hill's rise with the block beyond the
		// tested range is Bell's limit towards Hill; a falling Hill curve
		// is Bell's falling limb with the rise below the tested range.
		b, t, L, h := th[iBottom], th[iTop], th[iLogEC], th[iHill]
		lo, hi, _ := d.finiteRange()
		if h > 0 {
			starts = append(starts, []float64{b, t, L, h, upper[iLogIC] - 0.5, 1}, []float64{b, t, L, h, upper[iLogIC] - 2, 2})
			// A block that begins at the top of the tested range shows
			// only in the last levels.
			for _, Li := range []float64{hi - 0.5, hi, hi + 0.5} {
				starts = append(starts, []float64{b, t + 0.2*(t-b), L, h, math.Max(Li, L+0.25), 2})
			}
		} else {
			starts = append(starts, []float64{b, t, lower[iLogEC] + 0.5, 1, L, -h}, []float64{b, t, lower[iLogEC] + 1.5, 2, L, -h})
			for _, La := range []float64{lo - 0.5, lo, lo + 0.5} {
				starts = append(starts, []float64{b, t + 0.2*(t-b), math.Min(La, L-0.25), 2, L, -h})
			}
		}
	default:
		for _, o := range own[:min(len(own), 2)] {
			starts = append(starts, base(o))
		}
	}
	return starts, hill
}

// withMirrors appends to starts the mirror of each one, (bottom, top, hill)
// → (top, bottom, −hill), when the model's slope may take either sign and
// neither plateau nor the slope is fixed (the mirror would then be the
// same start, or leave the fixed value). Fixed values and the box are
// applied by clampStarts.
func withMirrors(set *resolved, starts [][]float64) [][]float64 {
	ro := set.curve.roles
	if set.curve.params[ro.Hill].bound != boundSlope || set.fixed[ro.Bottom] || set.fixed[ro.Top] || set.fixed[ro.Hill] {
		return starts
	}
	out := starts
	for _, st := range starts {
		m := append([]float64(nil), st...)
		m[ro.Bottom], m[ro.Top], m[ro.Hill] = st[ro.Top], st[ro.Bottom], -st[ro.Hill]
		out = append(out, m)
	}
	return out
}

// clampStarts sets fixed parameters to their values and moves every start
// inside the box.
func clampStarts(set *resolved, d *design, starts [][]float64) {
	lower := make([]float64, len(set.fixed))
	upper := make([]float64, len(set.fixed))
	set.bounds(d, lower, upper)
	for _, st := range starts {
		for j := range st {
			if set.fixed[j] {
				st[j] = set.fixedValue[j]
			}
			st[j] = math.Min(math.Max(st[j], lower[j]), upper[j])
		}
	}
}
