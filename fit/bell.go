package fit

import "math"

type bellCurve struct{}

var bellNames = []string{"bottom", "top", "log_ec50", "hill", "log_ic50", "hill_block"}

const (
	iLogIC     = 4
	iHillBlock = 5
)

func (bellCurve) names() []string { return bellNames }

// value evaluates the bell-shaped curve y = bottom + (top − bottom)·A·B with
// A = hillFraction(L, h, x) and B = 1/(1 + 10^((x − Lᵢ)hb)):
//
//	∂A/∂L = −A(1 − A)·ln10·h,   ∂A/∂h = −A(1 − A)·ln10·(L − x),
//	∂B/∂Lᵢ = B(1 − B)·ln10·hb,  ∂B/∂hb = −B(1 − B)·ln10·(x − Lᵢ).
func (bellCurve) value(t []float64, x float64, g []float64) float64 {
	b, top, L, h, Li, hb := t[iBottom], t[iTop], t[iLogEC], t[iHill], t[iLogIC], t[iHillBlock]
	A := hillFraction(L, h, x)
	vehicle := math.IsInf(x, -1)
	var B float64
	if vehicle {
		B = hillFraction(Li, hb, x)
		B = 1 - B // block term at zero concentration: 1 for hb > 0
	} else {
		B = 1 / (1 + math.Exp(ln10*(x-Li)*hb))
	}
	d := top - b
	if g != nil {
		g[iBottom], g[iTop] = 1-A*B, A*B
		if vehicle {
			g[iLogEC], g[iHill], g[iLogIC], g[iHillBlock] = 0, 0, 0, 0
		} else {
			qa := d * B * A * (1 - A) * ln10
			qb := d * A * B * (1 - B) * ln10
			g[iLogEC], g[iHill] = -qa*h, -qa*(L-x)
			g[iLogIC], g[iHillBlock] = qb*hb, -qb*(x-Li)
		}
	}
	return b + d*A*B
}

// BellPeak returns the log10 concentration and the response at the peak of
// a bell curve with parameters theta, found by golden-section search on x
// between log_ec50 − 2 and log_ic50 + 2 (the curve is unimodal there for
// positive slopes). The peak is where the pharmacologist sees the maximum;
// it lies below top unless IC50 ≫ EC50 (FACTS §1).
func BellPeak(theta []float64) (x, y float64) {
	f := func(x float64) float64 { return (bellCurve{}).value(theta, x, nil) }
	a, b := theta[iLogEC]-2, theta[iLogIC]+2
	if a > b {
		a, b = b, a
	}
	const invPhi = 0.6180339887498949 // (√5 − 1)/2
	c, d := b-invPhi*(b-a), a+invPhi*(b-a)
	fc, fd := f(c), f(d)
	for i := 0; i < 200 && b-a > 1e-12; i++ {
		if fc > fd {
			b, d, fd = d, c, fc
			c = b - invPhi*(b-a)
			fc = f(c)
		} else {
			a, c, fc = c, d, fd
			d = a + invPhi*(b-a)
			fd = f(d)
		}
	}
	x = (a + b) / 2
	return x, f(x)
}

// BellHalfPeak returns the log10 concentration on the rising limb where a
// bell curve reaches half way from bottom to its peak, by bisection.
func BellHalfPeak(theta []float64) float64 {
	xp, yp := BellPeak(theta)
	target := (theta[iBottom] + yp) / 2
	lo, hi := xp-20, xp
	for i := 0; i < 200 && hi-lo > 1e-13; i++ {
		mid := (lo + hi) / 2
		if (bellCurve{}).value(theta, mid, nil) < target {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}
