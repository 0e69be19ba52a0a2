package schild

import (
	"math"
	"sort"

	"sluice/fit"
	"sluice/fit/lm"
)

// Global-fit parameters, in order.
const (
	gBottom = iota
	gTop
	gHill
	gLogEC0 // log EC50 without antagonist
	gPK     // −log10 K: the pA2 with s free, the pKB with s = 1
	gSlope  // s, the Schild slope
	gParams
)

var globalNames = []string{"bottom", "top", "hill", "log_ec50_0", "pk", "slope"}

// level is one concentration of one curve, replicates averaged (as in
// package fit: an exact identity for least squares).
type level struct {
	curve int
	conc  float64 // agonist, molar
	lb    float64 // log10 antagonist, −Inf for the control
	w     float64
	ybar  float64
}

// globalModel is the Lew & Angus (1995) model: shared bottom, top and hill,
// and for curve i
//
//	log EC50ᵢ = log EC50₀ + log10(1 + ([B]ᵢ/K)^s) = L₀ + log10(1 + 10^(s·(log[B]ᵢ + pK)))
//
// (FACTS §2), fitted to every point at once.
type globalModel struct {
	levels []level
	y      []float64 // level means (the resample's, when bootstrapping)
	spec   *fit.Spec // fit.Hill, looked up once
	hill   fit.Roles // where bottom, top, log EC50 and hill sit in fit.Hill's parameters
	g      []float64 // fit.Hill's gradient and parameters, kept here so that no call allocates
	theta  []float64
}

func newGlobalModel(levels []level, y []float64) globalModel {
	np := len(fit.Hill.Params())
	return globalModel{levels: levels, y: y, spec: fit.Hill.Spec(), hill: fit.Hill.Roles(), g: make([]float64, np), theta: make([]float64, np)}
}

// Eval writes residuals ȳ − f and their Jacobian (column-major). With
// u = 10^(s(lb + pK)) and q = u/(1 + u): ∂L/∂L₀ = 1, ∂L/∂pK = q·s,
// ∂L/∂s = q·(lb + pK); the Hill terms come from fit.Hill.ValueGrad.
func (m *globalModel) Eval(p, r, jac []float64) {
	nl := len(m.levels)
	for i, lv := range m.levels {
		L := p[gLogEC0]
		var dPK, dS float64
		if !math.IsInf(lv.lb, -1) {
			z := p[gSlope] * (lv.lb + p[gPK])
			u := math.Pow(10, z)
			q := u / (1 + u)
			if math.IsInf(u, 1) {
				L += z // log10(1 + u) → z
				q = 1
			} else {
				L += math.Log10(1 + u)
			}
			dPK, dS = q*p[gSlope], q*(lv.lb+p[gPK])
		}
		h := m.hill
		m.theta[h.Bottom], m.theta[h.Top], m.theta[h.LogEC50], m.theta[h.Hill] = p[gBottom], p[gTop], L, p[gHill]
		var f float64
		if jac == nil {
			f = m.spec.Value(m.theta, lv.conc)
		} else {
			f = m.spec.ValueGrad(m.theta, lv.conc, m.g)
			dL := m.g[h.LogEC50]
			jac[gBottom*nl+i] = -m.g[h.Bottom]
			jac[gTop*nl+i] = -m.g[h.Top]
			jac[gHill*nl+i] = -m.g[h.Hill]
			jac[gLogEC0*nl+i] = -dL
			jac[gPK*nl+i] = -dL * dPK
			jac[gSlope*nl+i] = -dL * dS
		}
		r[i] = m.y[i] - f
	}
}

// GlobalFit is one global fit.
type GlobalFit struct {
	Params []float64 // in the order of globalNames
	SE     []float64
	RSS    float64
	DOF    int
	Status lm.Status
}

// globalData is the grouped data of a Schild dataset.
type globalData struct {
	levels []level
	w      []float64
	ybar   []float64
	pureSS float64
	n      int
	// per point, for resampling: level, response
	pl     []int
	py     []float64
	starts []int // first point of each level; starts[len(levels)] = n
}

func newGlobalData(curves []Curve) *globalData {
	d := &globalData{}
	for ci, c := range curves {
		lb := math.Inf(-1)
		if c.AntagonistConc > 0 {
			lb = math.Log10(c.AntagonistConc)
		}
		pts := append([]fit.Point(nil), c.Points...)
		sort.SliceStable(pts, func(a, b int) bool { return pts[a].Conc < pts[b].Conc })
		for k, p := range pts {
			if k == 0 || p.Conc != pts[k-1].Conc {
				d.levels = append(d.levels, level{curve: ci, conc: p.Conc, lb: lb})
				d.starts = append(d.starts, d.n)
			}
			l := len(d.levels) - 1
			d.levels[l].w++
			d.levels[l].ybar += p.Response
			d.pl = append(d.pl, l)
			d.py = append(d.py, p.Response)
			d.n++
		}
	}
	d.starts = append(d.starts, d.n)
	for l := range d.levels {
		d.levels[l].ybar /= d.levels[l].w
		d.w = append(d.w, d.levels[l].w)
		d.ybar = append(d.ybar, d.levels[l].ybar)
	}
	for i, y := range d.py {
		r := y - d.levels[d.pl[i]].ybar
		d.pureSS += r * r
	}
	return d
}

// globalSolver refits the global model without allocating.
type globalSolver struct {
	model globalModel
	prob  lm.Problem
	ws    lm.Workspace
	res   lm.Result
	x0    []float64
}

func newGlobalSolver(d *globalData, unitSlope bool, lower, upper []float64, estimateOnly bool) *globalSolver {
	s := &globalSolver{model: newGlobalModel(d.levels, d.ybar), x0: make([]float64, gParams)}
	fixed := make([]bool, gParams)
	fixed[gSlope] = unitSlope
	s.prob = lm.Problem{M: len(d.levels), N: gParams, Func: &s.model, Weights: d.w, Fixed: fixed, Lower: lower, Upper: upper}
	if estimateOnly {
		s.prob.Func = &s.model
	}
	return s
}

func (s *globalSolver) solve(y, start []float64, set *lm.Settings) lm.Status {
	s.model.y = y
	copy(s.x0, start)
	if s.prob.Fixed[gSlope] {
		s.x0[gSlope] = 1
	}
	s.ws.Solve(&s.prob, s.x0, set, &s.res)
	return s.res.Status
}
