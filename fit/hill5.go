package fit

import "math"

type hill5Curve struct{}

var hill5Names = []string{"bottom", "top", "log_ec50", "hill", "asymmetry"}

const iAsym = 4

func (hill5Curve) names() []string { return hill5Names }

// value evaluates the five-parameter logistic. With u = 10^((L − x)h),
// k = 2^(1/s) − 1, v = 1 + k·u and F = v^(−s):
//
//	∂F/∂L = −F·s·(1 − 1/v)·ln10·h,  ∂F/∂h = −F·s·(1 − 1/v)·ln10·(L − x),
//	∂F/∂s = −F·(ln v + s·u·k′/v),  k′ = −2^(1/s)·ln2/s²,
//
// written with 1 − 1/v = k·u/v so that nothing overflows for large u.
func (hill5Curve) value(t []float64, x float64, g []float64) float64 {
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
