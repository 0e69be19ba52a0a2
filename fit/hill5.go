package fit

import "math"

const iAsym = 4

// Asymmetry bounds for Hill5: beyond them the curve is a step on one side.
const (
	minAsymmetry = 0.05
	maxAsymmetry = 20
)

// hill5Spec is the asymmetric five-parameter (Richards) logistic,
// parameterised so that log_ec50 stays the concentration of half-maximal
// response whatever the asymmetry s > 0:
//
//	y = bottom + (top − bottom) / (1 + (2^(1/s) − 1)·10^((log_ec50 − x)·hill))^s
//
// s = 1 is the Hill equation (Richards 1959, J Exp Bot 10:290; the
// half-maximal reparameterisation follows from solving y = midpoint).
// Unlike Hill it has no twin: swapping the plateaus changes the shape.
func hill5Spec() *Spec {
	return newSpec(Spec{
		name:    Hill5,
		summary: "five-parameter asymmetric logistic (Richards), log_ec50 at half-maximal response",
		params: []param{
			{name: "bottom"},
			{name: "top"},
			{name: "log_ec50", bound: boundPotency},
			{name: "hill", bound: boundSlope},
			{name: "asymmetry", bound: boundBox, lo: minAsymmetry, hi: maxAsymmetry},
		},
		roles:    sharedRoles(),
		monotone: true,
		curve:    hill5Value,
		starts:   hill5Starts,
		logECF:   hill5LogECF,
	})
}

// hill5Value evaluates the five-parameter logistic. With u = 10^((L − x)h),
// k = 2^(1/s) − 1, v = 1 + k·u and F = v^(−s):
//
//	∂F/∂L = −F·s·(1 − 1/v)·ln10·h,  ∂F/∂h = −F·s·(1 − 1/v)·ln10·(L − x),
//	∂F/∂s = −F·(ln v + s·u·k′/v),  k′ = −2^(1/s)·ln2/s²,
//
// written with 1 − 1/v = k·u/v so that nothing overflows for large u.
func hill5Value(t []float64, x float64, g []float64) float64 {
	b, top, L, h, s := t[iBottom], t[iTop], t[iLogEC], t[iHill], t[iAsym]
	var F float64
	vehicle := math.IsInf(x, -1)
	switch {
	case vehicle && h > 0:
		F = 0
	case vehicle && h < 0:
		F = 1
	case vehicle:
		F = 0.5 // h = 0: u = 1, v = 2^(1/s), F = 1/2
	}
	if vehicle {
		if g != nil {
			g[iBottom], g[iTop] = 1-F, F
			g[iLogEC], g[iHill], g[iAsym] = 0, 0, 0
		}
		return b + (top-b)*F
	}
	p := math.Exp2(1 / s)
	k := p - 1
	u := math.Exp(ln10 * (L - x) * h)
	v := 1 + k*u
	lnv := math.Log(v)
	F = math.Exp(-s * lnv)
	if g != nil {
		w := 1 - 1/v // k·u/v
		if math.IsInf(v, 1) {
			w = 1
		}
		d := top - b
		g[iBottom], g[iTop] = 1-F, F
		g[iLogEC] = -d * F * s * w * ln10 * h
		g[iHill] = -d * F * s * w * ln10 * (L - x)
		kp := -p * math.Ln2 / (s * s)
		// s·u·k′/v = s·k′·w/k
		g[iAsym] = -d * F * (lnv + s*kp*w/k)
	}
	return b + (top-b)*F
}

// hill5Starts are Hill's starting values, each with the asymmetry 1, 0.5
// and 2.
func hill5Starts(set *resolved, d *design) [][]float64 {
	var starts [][]float64
	for _, h := range hillStarts(set, d) {
		for _, s := range []float64{1, 0.5, 2} {
			st := append([]float64(nil), h...)
			st[iAsym] = s
			starts = append(starts, st)
		}
	}
	return starts
}

// hill5LogECF solves the curve for the fraction q of the window from bottom
// to top: q = (1 + k·u)^(−s), u = 10^((L − x)h), so
//
//	x = L − log10(((q^(−1/s) − 1)/k))/h,
//
// with q = F/100 for a rising curve (the zero-concentration plateau is
// bottom) and q = 1 − F/100 for a falling one.
func hill5LogECF(t []float64, F float64) float64 {
	L, h, s := t[iLogEC], t[iHill], t[iAsym]
	q := F / 100
	if h < 0 {
		q = 1 - q
	}
	k := math.Exp2(1/s) - 1
	u := (math.Pow(q, -1/s) - 1) / k
	return L - math.Log10(u)/h
}
