package fit

import "math"

const (
	iLogIC     = 4
	iHillBlock = 5
)

// bellSpec is a rising Hill term times a falling one, for activation
// followed by block or desensitisation (FACTS §1):
//
//	y = bottom + (top − bottom)·A(x)·B(x)
//	A = 1/(1 + 10^((log_ec50 − x)·hill)),  B = 1/(1 + 10^((x − log_ic50)·hill_block))
//
// with hill, hill_block > 0, so the curve always rises before it falls and
// is not monotone; its parameters mean what they say when top ≥ bottom and
// log_ec50 ≤ log_ic50 (bellAdmissible). The observed peak and half-peak differ from top and EC50
// unless IC50 ≫ EC50 (BellPeak). Its window runs from bottom to the peak,
// and EC_F is read on the rising limb (bellLogECF).
func bellSpec() *Spec {
	return newSpec(Spec{
		name:    Bell,
		summary: "bell-shaped curve: activation (log_ec50, hill) times block (log_ic50, hill_block)",
		params: []param{
			{name: "bottom"},
			{name: "top"},
			{name: "log_ec50", bound: boundPotency},
			{name: "hill", bound: boundRisingSlope},
			{name: "log_ic50", bound: boundPotency},
			{name: "hill_block", bound: boundRisingSlope},
		},
		roles:      sharedRoles(),
		curve:      bellValue,
		starts:     bellStarts,
		logECF:     bellLogECF,
		admissible: bellAdmissible,
	})
}

// bellAdmissible says whether a Bell solution reads as Bell means it:
// activation, then block (log_ec50 ≤ log_ic50), towards a peak above
// bottom (top ≥ bottom). The box also holds a dip (top < bottom) and a
// crossed product (block before activation) whose top runs to ±1e6 and
// beyond along a ridge; on data with no block at all these can fit better
// than any peak while their top, log_ec50 and log_ic50 mean nothing, so the
// fit prefers an admissible solution (at worst Bell's Hill limit, the
// block held beyond the tested range) and flags FlagShapeNotAdmitted if it
// has none.
func bellAdmissible(t []float64) bool {
	return t[iTop] >= t[iBottom] && t[iLogEC] <= t[iLogIC]
}

// bellValue evaluates the bell-shaped curve y = bottom + (top − bottom)·A·B
// with A = hillFraction(L, h, x) and B = 1/(1 + 10^((x − Lᵢ)hb)):
//
//	∂A/∂L = −A(1 − A)·ln10·h,   ∂A/∂h = −A(1 − A)·ln10·(L − x),
//	∂B/∂Lᵢ = B(1 − B)·ln10·hb,  ∂B/∂hb = −B(1 − B)·ln10·(x − Lᵢ).
func bellValue(t []float64, x float64, g []float64) float64 {
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
	f := func(x float64) float64 { return bellValue(theta, x, nil) }
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
// bell curve reaches half way from bottom to its peak: bellLogECF at 50 %.
func BellHalfPeak(theta []float64) float64 { return bellLogECF(theta, 50) }

// bellLogECF is log10 EC_F of a bell curve. The curve returns towards
// bottom at high concentration, so it has no upper plateau; its window is
// taken from bottom (the zero-concentration plateau) to the peak (BellPeak),
// and EC_F is the concentration on the rising limb where the curve has
// gone F % of that way, found by bisection on [x_peak − 20, x_peak] (the
// rising limb is monotone there). EC50 found this way is the observed
// half-peak, which equals 10^log_ec50 only when IC50 ≫ EC50.
func bellLogECF(theta []float64, F float64) float64 {
	xp, yp := BellPeak(theta)
	b := theta[iBottom]
	target := b + F/100*(yp-b)
	lo, hi := xp-20, xp
	for i := 0; i < 200 && hi-lo > 1e-13; i++ {
		mid := (lo + hi) / 2
		if bellValue(theta, mid, nil) < target {
			lo = mid
		} else {
			hi = mid
		}
	}
	return (lo + hi) / 2
}

// bellStarts places log_ec50 where the rising limb crosses half the peak and
// log_ic50 where the falling limb does, with unit slopes.
func bellStarts(set *resolved, d *design) [][]float64 {
	b, t := plateaus(set, d)
	lo, hi, ok := d.finiteRange()
	if !ok {
		lo, hi = 0, 0
	}
	peak := 0
	for l, y := range d.ybar {
		if y > d.ybar[peak] {
			peak = l
		}
	}
	half := (b + d.ybar[peak]) / 2
	L, Li := (lo+d.x[peak])/2, hi+1
	if math.IsInf(d.x[peak], -1) {
		L = lo
	}
	for l := 1; l <= peak; l++ {
		if !math.IsInf(d.x[l-1], -1) && d.ybar[l-1] <= half && d.ybar[l] >= half {
			L = d.x[l-1] + (d.x[l]-d.x[l-1])*(half-d.ybar[l-1])/(d.ybar[l]-d.ybar[l-1]+1e-300)
			break
		}
	}
	for l := peak + 1; l < len(d.x); l++ {
		if d.ybar[l-1] >= half && d.ybar[l] <= half {
			Li = d.x[l-1] + (d.x[l]-d.x[l-1])*(d.ybar[l-1]-half)/(d.ybar[l-1]-d.ybar[l]+1e-300)
			break
		}
	}
	if !set.fixed[iTop] {
		t += 0.1 * (t - b) // the unblocked maximum lies above the observed peak
	}
	span := math.Max(hi-lo, 1)
	return [][]float64{
		{b, t, L, 1, Li, 1},
		{b, t, L, 2, Li, 2},
		{b, t, lo + 0.3*span, 1, lo + 0.8*span, 1},
		{b, 2 * t, L - 0.5, 1, Li + 0.5, 1},
	}
}
