package drift

import "math"

// EWMAFactor is the EWMA's standard deviation after t points in units of
// the process SD σ (Lucas & Saccucci 1990, Technometrics 32:1):
//
//	√( λ/(2 − λ) · (1 − (1 − λ)^(2t)) )
//
// t ≥ 1; the limits are target ± L·σ·EWMAFactor(λ, t).
func EWMAFactor(lambda float64, t int) float64 {
	return math.Sqrt(lambda / (2 - lambda) * (1 - math.Pow(1-lambda, 2*float64(t))))
}

// EWMAAsymptoticFactor is the limit of EWMAFactor as t grows, √(λ/(2 − λ)):
// 0.420084 for λ 0.3 (the NIST/SEMATECH e-Handbook's EWMA example, §6.3.2.4).
func EWMAAsymptoticFactor(lambda float64) float64 {
	return math.Sqrt(lambda / (2 - lambda))
}

// ewma is the running state of an EWMA chart.
type ewma struct {
	lambda, width float64 // λ and L·σ
	target        float64
	e             float64 // eₜ
	decay         float64 // (1 − λ)^(2t)
}

func newEWMA(b Baseline, lambda, l float64) ewma {
	return ewma{lambda: lambda, width: l * b.SD, target: b.Mean, e: b.Mean, decay: 1}
}

// step adds xₜ and returns eₜ and its limits.
func (w *ewma) step(x float64) (e, lo, hi float64) {
	w.e = w.lambda*x + (1-w.lambda)*w.e
	w.decay *= (1 - w.lambda) * (1 - w.lambda)
	half := w.width * math.Sqrt(w.lambda/(2-w.lambda)*(1-w.decay))
	return w.e, w.target - half, w.target + half
}
