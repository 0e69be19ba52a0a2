package fit

import "math"

type hillCurve struct{}

var hillNames = []string{"bottom", "top", "log_ec50", "hill"}

func (hillCurve) names() []string { return hillNames }

// value evaluates the Hill equation. With s = 1/(1 + u), u = 10^((L − x)h):
//
//	∂y/∂bottom = 1 − s,  ∂y/∂top = s,
//	∂y/∂L = −(top − bottom)·s(1 − s)·ln10·h,  ∂y/∂h = −(top − bottom)·s(1 − s)·ln10·(L − x).
//
// At x = −Inf (vehicle) s is exactly 0 for h > 0 and 1 for h < 0, and the
// derivatives with respect to L and h vanish.
func (hillCurve) value(t []float64, x float64, g []float64) float64 {
	b, top, L, h := t[iBottom], t[iTop], t[iLogEC], t[iHill]
	if math.IsInf(x, -1) {
		s := hillFraction(L, h, x)
		if g != nil {
			g[iBottom], g[iTop], g[iLogEC], g[iHill] = 1-s, s, 0, 0
		}
		return b + (top-b)*s
	}
	s := 1 / (1 + math.Exp(ln10*(L-x)*h))
	if g != nil {
		q := (top - b) * s * (1 - s) * ln10
		g[iBottom], g[iTop], g[iLogEC], g[iHill] = 1-s, s, -q*h, -q*(L-x)
	}
	return b + (top-b)*s
}

// hillFraction is s = 1/(1 + 10^((L − x)h)), the fraction of the window from
// bottom to top, with the vehicle limit at x = −Inf.
func hillFraction(L, h, x float64) float64 {
	if math.IsInf(x, -1) {
		switch {
		case h > 0:
			return 0
		case h < 0:
			return 1
		}
		return 0.5
	}
	return 1 / (1 + math.Exp(ln10*(L-x)*h))
}
