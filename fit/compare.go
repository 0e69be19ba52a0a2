package fit

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// FResult is an extra-sum-of-squares F test.
type FResult struct {
	F        float64
	DFn, DFd int
	P        float64
	Simpler  bool // true when the simpler model is not rejected at 0.05
}

// FTest compares a simpler model (rss0 on dof0 degrees of freedom) nested in
// a fuller one (rss1 on dof1 < dof0):
//
//	F = ((RSS₀ − RSS₁)/(dof₀ − dof₁)) / (RSS₁/dof₁)
//
// (Bates & Watts 1988, Nonlinear Regression Analysis, Wiley; approximate for
// nonlinear models; FACTS §1), with P the upper tail of F(dof₀ − dof₁, dof₁).
func FTest(rss0 float64, dof0 int, rss1 float64, dof1 int) FResult {
	r := FResult{DFn: dof0 - dof1, DFd: dof1}
	if r.DFn <= 0 || dof1 <= 0 {
		r.F, r.P = math.NaN(), math.NaN()
		return r
	}
	r.F = ((rss0 - rss1) / float64(r.DFn)) / (rss1 / float64(dof1))
	if r.F < 0 {
		r.F = 0
	}
	r.P = distuv.F{D1: float64(r.DFn), D2: float64(dof1)}.Survival(r.F)
	r.Simpler = r.P >= 0.05
	return r
}

// CompareNested runs FTest on two fits of the same data, the first nested
// in the second (e.g. hill with hill fixed at 1 against hill).
func CompareNested(simpler, fuller *Result) FResult {
	return FTest(simpler.RSS, simpler.DOF, fuller.RSS, fuller.DOF)
}

// AICcWeights returns the Akaike weights of fits of the same data,
// wᵢ = exp(−Δᵢ/2)/Σⱼ exp(−Δⱼ/2) with Δᵢ = AICcᵢ − min AICc (Burnham &
// Anderson 2002; for two models w = 1/(1 + exp(−ΔAICc/2)), FACTS §1).
func AICcWeights(fits ...*Result) []float64 {
	w := make([]float64, len(fits))
	best := math.Inf(1)
	for _, f := range fits {
		if f.Converged() {
			best = math.Min(best, f.AICc)
		}
	}
	var sum float64
	for i, f := range fits {
		if f.Converged() {
			w[i] = math.Exp(-(f.AICc - best) / 2)
			sum += w[i]
		}
	}
	for i := range w {
		w[i] /= sum
	}
	return w
}

// AICc returns the small-sample Akaike criterion of a least-squares fit of n
// points with p estimated parameters (Hurvich & Tsai 1989, Biometrika
// 76:297; FACTS §1): AIC = n·ln(RSS/n) + 2K, AICc = AIC + 2K(K+1)/(n − K − 1),
// K = p + 1.
func AICc(n int, rss float64, p int) float64 {
	nf, K := float64(n), float64(p+1)
	return nf*math.Log(rss/nf) + 2*K + 2*K*(K+1)/(nf-K-1)
}
