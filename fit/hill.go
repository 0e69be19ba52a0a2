package fit

import "math"

// The parameter layout the built-in models share: Hill's four, to which
// Hill5 and Bell append their own. Only the models' files and tests use
// these; other code goes through Roles.
const (
	iBottom = 0
	iTop    = 1
	iLogEC  = 2
	iHill   = 3
)

// sharedRoles is the Roles of the shared layout.
func sharedRoles() Roles { return Roles{Bottom: iBottom, Top: iTop, LogEC50: iLogEC, Hill: iHill} }

// hillSpec is the four-parameter Hill (logistic) equation on log10
// concentration x (FACTS §1; Hill 1910):
//
//	y = bottom + (top − bottom) / (1 + 10^((log_ec50 − x)·hill))
//
// hill > 0 rises with concentration (agonist), hill < 0 falls
// (inhibition); bottom and top are the lower and upper plateaus. The curve
// has a twin, (bottom, top, hill) ↔ (top, bottom, −hill), and the fit
// reports the one with bottom < top. EC_F has a closed form (hillLogECF).
func hillSpec() *Spec {
	return newSpec(Spec{
		name:    Hill,
		summary: "four-parameter Hill equation, rising or falling (fix hill, bottom or top for three parameters)",
		params: []param{
			{name: "bottom"},
			{name: "top"},
			{name: "log_ec50", bound: boundPotency},
			{name: "hill", bound: boundSlope},
		},
		roles:    sharedRoles(),
		monotone: true,
		twin:     true,
		curve:    hillValue,
		starts:   hillStarts,
		logECF:   hillLogECF,
	})
}

// hillValue evaluates the Hill equation. With s = 1/(1 + u), u = 10^((L − x)h):
//
//	∂y/∂bottom = 1 − s,  ∂y/∂top = s,
//	∂y/∂L = −(top − bottom)·s(1 − s)·ln10·h,  ∂y/∂h = −(top − bottom)·s(1 − s)·ln10·(L − x).
//
// At x = −Inf (vehicle) s is exactly 0 for h > 0 and 1 for h < 0, and the
// derivatives with respect to L and h vanish.
func hillValue(t []float64, x float64, g []float64) float64 {
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

// hillLogECF is log10 EC_F of the Hill equation: F % of the way from the
// zero-concentration plateau (bottom for a rising curve, top for a falling
// one) to the other (FACTS §1):
//
//	log EC_F = log EC50 + log10(F/(100 − F))/|hill|
func hillLogECF(t []float64, F float64) float64 {
	return t[iLogEC] + math.Log10(F/(100-F))/math.Abs(t[iHill])
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
