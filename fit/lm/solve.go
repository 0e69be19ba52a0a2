package lm

import "math"

var (
	posInf = math.Inf(1)
	negInf = math.Inf(-1)
)

// undampedLambda is the largest damping at which a step still counts as
// nearly Gauss–Newton for the step and function tests: at λ ≤ 1 the damping
// term λD² is no larger than the diagonal of JᵀJ. Larger damping makes steps
// small because they are damped, not because the solve has converged, and
// stopping there is the classic false convergence.
const undampedLambda = 1.0

// Result is the outcome of a solve.
type Result struct {
	// X is the estimate (length N).
	X []float64
	// Status says how the solve ended; see Status.Converged.
	Status Status
	// Iterations counts accepted steps; Evaluations counts evaluations of
	// the residuals and Jacobian.
	Iterations, Evaluations int
	// RSS is S(X) = Σ wᵢrᵢ².
	RSS float64
	// DOF is M − p, p the number of parameters neither fixed nor at a bound.
	DOF int
	// AtBound marks free parameters that end exactly on a bound.
	AtBound []bool
	// Unscaled is (JᵀWJ)⁻¹ over the estimated parameters, N×N row-major,
	// with zero rows and columns for fixed and at-bound parameters. It is
	// all NaN when the Jacobian is rank-deficient at the estimate (the
	// status is then Singular if the solve had converged, else it keeps its
	// own), with EstimateOnly, and after NumericalFailure.
	Unscaled []float64
	// Cov is σ²·Unscaled with σ² = RSS/DOF (NaN over the estimated
	// parameters when DOF is 0).
	Cov []float64
}

// SE returns the standard error of parameter j, √Cov[j,j]. When RSS > 0 it
// is NaN for a fixed or at-bound parameter (its row of Cov is zero). It is
// NaN wherever Cov is NaN (see Unscaled; and for the estimated parameters
// when DOF is 0). On a zero-residual fit (RSS = 0) it is 0 for a fixed or
// at-bound parameter, and 0 for the estimated ones too when DOF > 0 and the
// Jacobian has full rank: the data determine the estimate exactly.
func (r *Result) SE(j int) float64 {
	n := len(r.X)
	v := r.Cov[j*n+j]
	if v == 0 && r.RSS != 0 {
		return math.NaN()
	}
	return math.Sqrt(v)
}

// Solve minimises p from x0 with a fresh workspace. Use Workspace.Solve to
// solve many problems without allocating.
func Solve(p *Problem, x0 []float64, s *Settings) (*Result, error) {
	var ws Workspace
	var res Result
	err := ws.Solve(p, x0, s, &res)
	return &res, err
}

// Workspace holds the buffers of a solve. The zero value is ready to use; it
// grows to the largest problem it has seen. A Workspace is not safe for
// concurrent use.
type Workspace struct {
	x, xt, step, d, g, cn []float64
	r, rt, sw, qtr        []float64
	jac, jact, a          []float64
	act                   []int
	held, pinned          []bool
	aug, b, tau           []float64
}

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

func (w *Workspace) reset(m, n int) {
	w.x, w.xt, w.step = grow(w.x, n), grow(w.xt, n), grow(w.step, n)
	w.d, w.g, w.cn = grow(w.d, n), grow(w.g, n), grow(w.cn, n)
	w.r, w.rt, w.sw, w.qtr = grow(w.r, m), grow(w.rt, m), grow(w.sw, m), grow(w.qtr, m)
	w.jac, w.jact, w.a = grow(w.jac, m*n), grow(w.jact, m*n), grow(w.a, m*n)
	w.aug, w.b, w.tau = grow(w.aug, 2*n*n), grow(w.b, 2*n), grow(w.tau, 2*n)
	if cap(w.act) < n {
		w.act = make([]int, n)
		w.held = make([]bool, n)
		w.pinned = make([]bool, n)
	}
	w.act, w.held, w.pinned = w.act[:n], w.held[:n], w.pinned[:n]
	for j := range w.pinned {
		w.pinned[j] = false
	}
}

// eval computes the weighted residuals and, when jac is not nil, the weighted
// Jacobian at x, and returns Σ rᵢ² (+Inf when anything is not finite).
func (w *Workspace) eval(p *Problem, x, r, jac []float64) float64 {
	p.Func.Eval(x, r, jac)
	m := p.M
	var s float64
	for i := 0; i < m; i++ {
		r[i] *= w.sw[i]
		s += r[i] * r[i]
	}
	if jac != nil {
		// A NaN or ±Inf anywhere in the Jacobian makes this sum NaN or Inf.
		var check float64
		for j := 0; j < p.N; j++ {
			if p.fixed(j) {
				continue
			}
			col := jac[j*m : j*m+m]
			for i, sw := range w.sw[:m] {
				col[i] *= sw
				check += col[i] * 0
			}
		}
		if check != 0 {
			s = posInf
		}
	}
	if math.IsNaN(s) {
		return posInf
	}
	return s
}

// Solve minimises p from x0 and writes the outcome into dst, reusing dst's
// slices when they are large enough. The error is dst.Status.Err().
func (w *Workspace) Solve(p *Problem, x0 []float64, s *Settings, dst *Result) error {
	p.validate(x0)
	set := s.resolved()
	m, n := p.M, p.N
	w.reset(m, n)
	for i := 0; i < m; i++ {
		if p.Weights == nil {
			w.sw[i] = 1
		} else {
			w.sw[i] = math.Sqrt(p.Weights[i])
		}
	}
	x := w.x
	for j := range x {
		x[j] = math.Min(math.Max(x0[j], p.lower(j)), p.upper(j))
		w.d[j] = 0
	}
	status := NotTerminated
	nfev, iters := 1, 0
	S := w.eval(p, x, w.r, w.jac)
	if math.IsInf(S, 1) {
		status = NumericalFailure
	}
	var delta, par float64 // trust radius ‖Dδ‖ ≤ Δ and the damping λ that meets it
	k := 0                 // number of active (estimated, unheld) parameters
	lastPar := 0.0

outer:
	for status == NotTerminated {
		if S == 0 {
			status = ZeroResidual
			break
		}
		rnorm := math.Sqrt(S)
		// Gradient g = Jᵀr, column norms, and the active set.
		k = 0
		gmax := 0.0
		for j := 0; j < n; j++ {
			w.held[j] = false
			if p.fixed(j) {
				continue
			}
			col := w.jac[j*m : j*m+m]
			var g, cn float64
			for i, v := range col {
				g += v * w.r[i]
				cn += v * v
			}
			cn = math.Sqrt(cn)
			w.g[j], w.cn[j] = g, cn
			// Descent is along −g: held at the lower bound when g > 0;
			// also held when pinned, below.
			if w.pinned[j] || (x[j] <= p.lower(j) && g > 0) || (x[j] >= p.upper(j) && g < 0) {
				w.held[j] = true
				continue
			}
			w.act[k] = j
			k++
			if cn > 0 {
				gmax = math.Max(gmax, math.Abs(g)/(cn*rnorm))
			}
			if cn > w.d[j] {
				w.d[j] = cn
			}
			if w.d[j] == 0 {
				w.d[j] = 1
			}
		}
		xnorm := w.scaledNorm(x, k)
		if iters == 0 && delta == 0 {
			// Moré (1978) §6: the first trust radius is factor·‖Dx₀‖.
			delta = set.InitialTrust * xnorm
			if delta == 0 {
				delta = set.InitialTrust
			}
		}
		if gmax <= set.GradientTol || k == 0 {
			status = GradientConvergence
			break
		}
		if iters >= set.MaxIterations || nfev >= set.MaxEvaluations {
			status = IterationLimit
			break
		}
		// QR of the active columns; qtr = Qᵀr.
		for c := 0; c < k; c++ {
			copy(w.a[c*m:c*m+m], w.jac[w.act[c]*m:w.act[c]*m+m])
		}
		copy(w.qtr, w.r[:m])
		householderQR(w.a, m, k, w.tau, w.qtr)

		for {
			par = w.levenbergParameter(m, k, delta, par)
			lastPar = par
			// A parameter on a bound whose step points out of the box is
			// pinned there and the step recomputed without it: dropping
			// the component alone would leave the others solved for a
			// move that cannot happen. (Its gradient can point inward, or
			// vanish, when its Jacobian column is negligible.)
			repin := false
			for c := 0; c < k; c++ {
				j := w.act[c]
				if (x[j] >= p.upper(j) && w.b[c] > 0) || (x[j] <= p.lower(j) && w.b[c] < 0) {
					w.pinned[j] = true
					repin = true
				}
			}
			if repin {
				continue outer
			}
			// The step, shortened to stop at the first bound it would
			// cross. Clipping each component instead would bend the step
			// away from the trust-region solution, and a parameter with a
			// small scaled column (a steep slope) would sit clipped on its
			// bound while every other component shrinks without end.
			// Components pointing out of a bound already reached are
			// dropped.
			alpha := 1.0
			for c := 0; c < k; c++ {
				j := w.act[c]
				lo, hi, xj, bc := p.lower(j), p.upper(j), x[j], w.b[c]
				if bc > 0 && xj < hi && xj+bc > hi {
					alpha = math.Min(alpha, (hi-xj)/bc)
				} else if bc < 0 && xj > lo && xj+bc < lo {
					alpha = math.Min(alpha, (lo-xj)/bc)
				}
			}
			for j := range w.step {
				w.step[j] = 0
				w.xt[j] = x[j]
			}
			for c := 0; c < k; c++ {
				j := w.act[c]
				xt := math.Min(math.Max(x[j]+alpha*w.b[c], p.lower(j)), p.upper(j))
				w.xt[j] = xt
				w.step[j] = xt - x[j]
			}
			pnorm := w.scaledNorm(w.step, k)
			if iters == 0 {
				delta = math.Min(delta, pnorm)
			}
			// Predicted reduction of the linear model: ‖Qᵀr‖² − ‖Rs + Qᵀr‖².
			var pred float64
			for i := 0; i < k; i++ {
				v := w.qtr[i]
				for c := i; c < k; c++ {
					v += w.a[c*m+i] * w.step[w.act[c]]
				}
				pred += w.qtr[i]*w.qtr[i] - v*v
			}
			St := w.eval(p, w.xt, w.rt, w.jact)
			nfev++
			actual := -1.0 // relative actual reduction, as MINPACK's actred
			if St < 100*S {
				actual = 1 - St/S
			}
			predRel := pred / S
			ratio := 0.0
			if predRel > 0 {
				ratio = actual / predRel
			}
			// Trust-radius update (Moré 1978, §6), as MINPACK's lmder
			// except in two respects. pred is the reduction predicted
			// for the step taken, which may stop at a bound; for a
			// full step it equals lmder's prered, (‖Jδ‖² + 2λ‖Dδ‖²)/S.
			// The shrink factor after an increase of S uses −pred as
			// the directional derivative where lmder uses
			// −(‖Jδ‖² + λ‖Dδ‖²)/S, so it shrinks Δ a little less.
			if ratio <= 0.25 {
				shrink := 0.5
				if actual < 0 {
					dirder := -predRel // slope of S along the step, relative
					shrink = 0.5 * dirder / (dirder + 0.5*actual)
				}
				if St >= 100*S || shrink < 0.1 || math.IsNaN(shrink) {
					shrink = 0.1
				}
				delta = shrink * math.Min(delta, pnorm/0.1)
				par /= shrink
			} else if par == 0 || ratio >= 0.75 {
				delta = pnorm / 0.5
				par *= 0.5
			}
			nearlyUndamped := lastPar <= undampedLambda
			if ratio >= 1e-4 {
				x, w.xt = w.xt, x
				w.r, w.rt = w.rt, w.r
				w.jac, w.jact = w.jact, w.jac
				S = St
				xnorm = w.scaledNorm(x, k)
				iters++
				for j := range w.pinned {
					w.pinned[j] = false
				}
			}
			if nearlyUndamped && math.Abs(actual) <= set.FuncTol && predRel <= set.FuncTol && ratio <= 2 {
				status = FunctionConvergence
				break outer
			}
			if nearlyUndamped && delta <= set.StepTol*xnorm {
				status = StepConvergence
				break outer
			}
			if nfev >= set.MaxEvaluations {
				status = IterationLimit
				break outer
			}
			if delta <= epsilon*xnorm || (math.Abs(actual) <= epsilon && predRel <= epsilon && ratio <= 2) {
				// Nothing representable is left to gain, but the step
				// was damped: the solve is stuck, not converged.
				status = NoProgress
				break outer
			}
			if ratio >= 1e-4 {
				continue outer
			}
		}
	}
	// The buffers may have been swapped; keep the workspace's view current.
	w.x = x
	w.finish(p, dst, status, S, iters, nfev, set.EstimateOnly)
	return dst.Status.Err()
}

// epsilon is the float64 machine epsilon.
const epsilon = 2.220446049250313e-16

// scaledNorm returns ‖Dv‖ over the k active parameters.
func (w *Workspace) scaledNorm(v []float64, k int) float64 {
	var s float64
	for c := 0; c < k; c++ {
		j := w.act[c]
		s += (w.d[j] * v[j]) * (w.d[j] * v[j])
	}
	return math.Sqrt(s)
}

// levenbergParameter returns a damping λ ≥ 0 for the trust radius Δ: λ = 0
// when the Gauss–Newton step has ‖Dδ‖ ≤ 1.1·Δ, and otherwise the λ of
// Moré's safeguarded Newton iteration on φ(λ) = ‖Dδ(λ)‖ − Δ (Moré 1978,
// Algorithm 5.5; MINPACK lmpar), stopped when ‖Dδ‖ is within 10 % of Δ, when
// φ stops rising towards 0 from below with no lower bound on λ, or after 10
// iterations, as lmpar does. The step is left in w.b[:k]; prev is the
// previous λ, the iteration's first guess.
func (w *Workspace) levenbergParameter(m, k int, delta, prev float64) float64 {
	// Gauss–Newton step, when R is nonsingular.
	singular := false
	for c := 0; c < k; c++ {
		if w.a[c*m+c] == 0 {
			singular = true
		}
	}
	if !singular {
		for i := 0; i < k; i++ {
			w.b[i] = -w.qtr[i]
		}
		backSubstitute(w.a, m, k, w.b)
		dxnorm := w.scaledNormPacked(w.b, k)
		fp := dxnorm - delta
		if fp <= 0.1*delta {
			return 0
		}
	}
	// Bounds on λ: paru from the gradient D⁻¹Rᵀqtr; parl from the Newton
	// step at λ = 0 when R is nonsingular.
	var gnorm float64
	for c := 0; c < k; c++ {
		var s float64
		for i := 0; i <= c; i++ {
			s += w.a[c*m+i] * w.qtr[i]
		}
		v := s / w.d[w.act[c]]
		gnorm += v * v
	}
	gnorm = math.Sqrt(gnorm)
	paru := gnorm / delta
	if paru == 0 {
		paru = dwarf / math.Min(delta, 0.1)
	}
	parl := 0.0
	if !singular {
		dxnorm := w.scaledNormPacked(w.b, k)
		parl = (dxnorm - delta) / delta / w.phiDerivative(w.a, m, k, dxnorm)
	}
	par := math.Min(math.Max(prev, parl), paru)
	if par == 0 {
		par = gnorm / w.scaledNormPacked(w.b, k)
		if math.IsNaN(par) || math.IsInf(par, 0) {
			par = 0.001 * paru
		}
	}
	rows := 2 * k
	prevFp := 0.0
	for iter := 1; ; iter++ {
		if par == 0 {
			par = math.Max(dwarf, 0.001*paru)
		}
		w.dampedStep(m, k, par)
		dxnorm := w.scaledNormPacked(w.b, k)
		fp := dxnorm - delta
		if math.Abs(fp) <= 0.1*delta || (parl == 0 && fp <= prevFp && prevFp < 0) || iter == 10 {
			return par
		}
		parc := fp / delta / w.phiDerivative(w.aug, rows, k, dxnorm)
		if fp > 0 {
			parl = math.Max(parl, par)
		} else if fp < 0 {
			paru = math.Min(paru, par)
		}
		par = math.Max(parl, par+parc)
		prevFp = fp
	}
}

// dwarf is the smallest positive normal float64.
const dwarf = 2.2250738585072014e-308

// scaledNormPacked returns ‖Dδ‖ for δ packed over the active parameters.
func (w *Workspace) scaledNormPacked(b []float64, k int) float64 {
	var s float64
	for c := 0; c < k; c++ {
		v := w.d[w.act[c]] * b[c]
		s += v * v
	}
	return math.Sqrt(s)
}

// phiDerivative returns ‖R⁻ᵀ·D(Dδ)/‖Dδ‖‖², the magnitude of φ'(λ)·‖Dδ‖
// in Moré's iteration, for the k×k upper-triangular R held in the first k
// rows of the column-major rows×k matrix r, and δ in w.b.
func (w *Workspace) phiDerivative(r []float64, rows, k int, dxnorm float64) float64 {
	v := w.tau[k : 2*k] // scratch beyond the k reflector scalars in use
	for c := 0; c < k; c++ {
		d := w.d[w.act[c]]
		v[c] = d * d * w.b[c] / dxnorm
	}
	// Forward substitution Rᵀz = v.
	var s2 float64
	for c := 0; c < k; c++ {
		s := v[c]
		for i := 0; i < c; i++ {
			s -= r[c*rows+i] * v[i]
		}
		v[c] = s / r[c*rows+c]
		s2 += v[c] * v[c]
	}
	return s2
}

// dampedStep solves min ‖[R; √λ·D]δ + [Qᵀr; 0]‖ over the k active columns
// and leaves δ in w.b[:k] and the triangular factor of [R; √λ·D] in the
// first k rows of w.aug (2k×k, column-major).
func (w *Workspace) dampedStep(m, k int, lambda float64) {
	rows := 2 * k
	aug := w.aug[:rows*k]
	for c := 0; c < k; c++ {
		col := aug[c*rows : c*rows+rows]
		for i := range col {
			col[i] = 0
		}
		for i := 0; i <= c; i++ {
			col[i] = w.a[c*m+i]
		}
		col[k+c] = math.Sqrt(lambda) * w.d[w.act[c]]
	}
	b := w.b[:rows]
	for i := 0; i < k; i++ {
		b[i] = -w.qtr[i]
		b[k+i] = 0
	}
	householderQR(aug, rows, k, w.tau[:k], b)
	backSubstitute(aug, rows, k, b)
}

// finish fills dst with the estimate, the at-bound set and the covariance.
func (w *Workspace) finish(p *Problem, dst *Result, status Status, S float64, iters, nfev int, estimateOnly bool) {
	m, n := p.M, p.N
	dst.X = grow(dst.X, n)
	copy(dst.X, w.x)
	dst.Status = status
	dst.Iterations, dst.Evaluations = iters, nfev
	dst.RSS = S
	dst.AtBound = growBool(dst.AtBound, n)
	dst.Unscaled = grow(dst.Unscaled, n*n)
	dst.Cov = grow(dst.Cov, n*n)
	for i := range dst.Unscaled {
		dst.Unscaled[i] = 0
		dst.Cov[i] = 0
	}
	// Recompute the active set at the estimate (the loop may have ended
	// before computing it, e.g. on NumericalFailure).
	k := 0
	for j := 0; j < n; j++ {
		dst.AtBound[j] = false
		if p.fixed(j) {
			continue
		}
		col := w.jac[j*m : j*m+m]
		var cn float64
		for _, v := range col {
			cn += v * v
		}
		// A parameter that ends exactly on a bound is held there, whether
		// its gradient points out of the box or, with a negligible
		// Jacobian column, nowhere in particular.
		if w.x[j] <= p.lower(j) || w.x[j] >= p.upper(j) {
			dst.AtBound[j] = true
			continue
		}
		w.act[k] = j
		w.cn[j] = math.Sqrt(cn)
		k++
	}
	dst.DOF = m - k
	if status == NumericalFailure || status == NotTerminated || estimateOnly {
		fillNaN(dst.Unscaled)
		fillNaN(dst.Cov)
		return
	}
	// QR of the column-scaled active Jacobian J·C⁻¹, C = diag(‖Jⱼ‖), so that
	// the rank test does not depend on the parameters' units.
	for c := 0; c < k; c++ {
		j := w.act[c]
		src := w.jac[j*m : j*m+m]
		dstc := w.a[c*m : c*m+m]
		inv := 1 / w.cn[j]
		if w.cn[j] == 0 {
			inv = 0
		}
		for i, v := range src {
			dstc[i] = v * inv
		}
	}
	householderQR(w.a, m, k, w.tau)
	rmax := 0.0
	for c := 0; c < k; c++ {
		rmax = math.Max(rmax, math.Abs(w.a[c*m+c]))
	}
	for c := 0; c < k; c++ {
		if math.Abs(w.a[c*m+c]) <= rankTol*rmax || rmax == 0 {
			if status.Converged() {
				dst.Status = Singular
			}
			fillNaN(dst.Unscaled)
			fillNaN(dst.Cov)
			return
		}
	}
	// R⁻¹ in place of R (upper triangular), then (RᵀR)⁻¹ = R⁻¹R⁻ᵀ.
	for c := 0; c < k; c++ {
		w.a[c*m+c] = 1 / w.a[c*m+c]
		for i := 0; i < c; i++ {
			var s float64
			for l := i; l < c; l++ {
				s += w.a[l*m+i] * w.a[c*m+l]
			}
			w.a[c*m+i] = -s * w.a[c*m+c]
		}
	}
	sigma2 := math.NaN()
	if dst.DOF > 0 {
		sigma2 = S / float64(dst.DOF)
	}
	for r := 0; r < k; r++ {
		for c := r; c < k; c++ {
			var s float64
			for l := c; l < k; l++ {
				s += w.a[l*m+r] * w.a[l*m+c]
			}
			jr, jc := w.act[r], w.act[c]
			v := s / (w.cn[jr] * w.cn[jc])
			dst.Unscaled[jr*n+jc], dst.Unscaled[jc*n+jr] = v, v
			dst.Cov[jr*n+jc], dst.Cov[jc*n+jr] = sigma2*v, sigma2*v
		}
	}
}

// rankTol is the relative size of a diagonal element of R, for the
// unit-column Jacobian, below which the Jacobian counts as rank-deficient.
// Standard errors computed past it would have fewer than about four correct
// digits.
const rankTol = 1e-11

func fillNaN(s []float64) {
	for i := range s {
		s[i] = math.NaN()
	}
}

func growBool(s []bool, n int) []bool {
	if cap(s) < n {
		return make([]bool, n)
	}
	return s[:n]
}
