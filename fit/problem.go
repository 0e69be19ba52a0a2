package fit

import "sluice/fit/lm"

// problem adapts a grouped curve to lm.Residuals: residual ȳₗ − f(xₗ; θ)
// with weight Wₗ.
type problem struct {
	curve curveModel
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
}

func newSolver(set *resolved, d *design) *solver {
	np := len(set.curve.names())
	s := &solver{set: set, design: d,
		lower: make([]float64, np), upper: make([]float64, np), x0: make([]float64, np),
		ybuf: make([]float64, len(d.x)), wbuf: make([]float64, len(d.x))}
	set.bounds(d, s.lower, s.upper)
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
	s.ws.Solve(&s.lmp, s.x0, s.set.solver, &s.res)
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
