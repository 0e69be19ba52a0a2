package fit

import "sluice/fit/lm"

// problem adapts a grouped curve to lm.Residuals: residual ȳₗ − f(xₗ; θ)
// with weight Wₗ.
type problem struct {
	curve *Spec
	x, y  []float64
	grad  [maxParams]float64
	np    int
}

func (p *problem) Eval(theta, r, jac []float64) {
	m := len(p.x)
	for i, x := range p.x {
		if jac == nil {
			r[i] = p.y[i] - p.curve.value(theta, x, nil)
			continue
		}
		g := p.grad[:p.np]
		r[i] = p.y[i] - p.curve.value(theta, x, g)
		for j, v := range g {
			jac[j*m+i] = -v
		}
	}
}

// solver holds what one goroutine needs to fit curves of one design
// repeatedly without allocating: the lm problem, its workspace and result.
type solver struct {
	prob   problem
	lmp    lm.Problem
	ws     lm.Workspace
	res    lm.Result
	lower  []float64
	upper  []float64
	x0     []float64
	ybuf   []float64 // level means of a resample
	wbuf   []float64 // level weights of a resample
	set    *resolved
	design *design
	lmSet  *lm.Settings
}

// newSolver returns a solver for the design. A solver for resamples
// (forResamples) skips the covariance and stops at refitTol (see
// refitSettings); one for the fit itself uses the settings as given.
func newSolver(set *resolved, d *design, forResamples bool) *solver {
	np := len(set.curve.names())
	s := &solver{set: set, design: d, lmSet: set.solver,
		lower: make([]float64, np), upper: make([]float64, np), x0: make([]float64, np),
		ybuf: make([]float64, len(d.x)), wbuf: make([]float64, len(d.x))}
	set.bounds(d, s.lower, s.upper)
	if forResamples {
		s.lmSet = refitSettings(set.solver)
	}
	s.prob = problem{curve: set.curve, x: d.x, y: d.ybar, np: np}
	s.lmp = lm.Problem{M: len(d.x), N: np, Func: &s.prob, Weights: d.w,
		Fixed: set.fixed, Lower: s.lower, Upper: s.upper}
	return s
}

// solve fits level means y with level weights w from start and leaves the
// outcome in s.res.
func (s *solver) solve(y, w, start []float64) lm.Status {
	s.prob.y = y
	s.lmp.Weights = w
	copy(s.x0, start)
	for j, f := range s.set.fixed {
		if f {
			s.x0[j] = s.set.fixedValue[j]
		}
	}
	s.ws.Solve(&s.lmp, s.x0, s.lmSet, &s.res)
	return s.res.Status
}

// anyAtBound reports whether the last solve ended with a parameter at a bound.
func (s *solver) anyAtBound() bool {
	for _, b := range s.res.AtBound {
		if b {
			return true
		}
	}
	return false
}

// refitFuncTol is the relative-reduction tolerance of bootstrap refits when
// the caller sets none. A Gauss–Newton step whose predicted reduction of the
// RSS is ε·RSS moves the estimate by at most √(ε·dof) standard errors, so
// 1e-10 stops a 30-point refit within ~5e-5 SE of its optimum: far below the
// Monte Carlo error of any interval (~5e-2 SE at B = 1000), at half the
// iterations of the fit's own 1e-15. TestRefitToleranceKeepsIntervals
// checks the intervals against refits at full precision.
const refitFuncTol = 1e-10

// refitMaxIterations bounds a bootstrap refit when the caller sets no
// limit. A refit starts at the estimate and needs a few dozen steps (the
// cost model measures ~7 evaluations on average); a resample that has not
// converged in 200 is retried from the self-start values rather than
// given the solver's default of 1000, which is sized for the NIST problems.
const refitMaxIterations = 200

func refitSettings(base *lm.Settings) *lm.Settings {
	var s lm.Settings
	if base != nil {
		s = *base
	}
	s.EstimateOnly = true
	if s.FuncTol == 0 {
		s.FuncTol = refitFuncTol
	}
	if s.MaxIterations == 0 {
		s.MaxIterations = refitMaxIterations
	}
	return &s
}
