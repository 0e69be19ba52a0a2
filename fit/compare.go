package fit

import (
	"fmt"
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
// The limits are explicit: when the fuller model gains nothing
// (RSS₀ ≤ RSS₁, both exact fits included) F = 0 and P = 1; when it fits
// exactly and the simpler one does not (RSS₁ = 0 < RSS₀), F = +Inf and
// P = 0. P is NaN only when the degrees of freedom leave nothing to test.
func FTest(rss0 float64, dof0 int, rss1 float64, dof1 int) FResult {
	r := FResult{DFn: dof0 - dof1, DFd: dof1}
	switch {
	case r.DFn <= 0 || dof1 <= 0 || math.IsNaN(rss0) || math.IsNaN(rss1):
		r.F, r.P = math.NaN(), math.NaN()
		return r
	case rss0 <= rss1:
		r.F, r.P = 0, 1
	case rss1 == 0:
		r.F, r.P = math.Inf(1), 0
	default:
		r.F = ((rss0 - rss1) / float64(r.DFn)) / (rss1 / float64(dof1))
		r.P = distuv.F{D1: float64(r.DFn), D2: float64(dof1)}.Survival(r.F)
	}
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
// When a converged fit's AICc is undefined (NaN: too few points for its
// parameters) the weights cannot decide and are all NaN.
func AICcWeights(fits ...*Result) []float64 {
	w := make([]float64, len(fits))
	best := math.Inf(1)
	for _, f := range fits {
		if f.Converged() {
			if math.IsNaN(f.AICc) {
				for i := range w {
					w[i] = math.NaN()
				}
				return w
			}
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
// K = p + 1. The correction is undefined for n − K − 1 ≤ 0 (the formula
// would turn large and negative there), and AICc is then NaN.
func AICc(n int, rss float64, p int) float64 {
	nf, K := float64(n), float64(p+1)
	if nf-K-1 <= 0 {
		return math.NaN()
	}
	return nf*math.Log(rss/nf) + 2*K + 2*K*(K+1)/(nf-K-1)
}

// Comparison is the test of a fitted model against the simpler model it
// nests (Hill inside Hill5 at asymmetry 1, and inside Bell as log_ic50
// goes to infinity), run on the same data when the fuller model is fitted.
type Comparison struct {
	// Simpler is the nested model; its fit's RSS and DOF are beside it.
	Simpler    Model
	SimplerRSS float64
	SimplerDOF int
	// F is the extra-sum-of-squares F test (FTest) of the simpler fit
	// against the fitted model.
	F FResult
	// DeltaAICc is AICc(simpler) − AICc(fitted): positive favours the
	// fitted model. NaN when either is undefined.
	DeltaAICc float64
	// Decided is false when the test cannot decide (a fit failed, or
	// too few points for the F test); PrefersSimpler is then false.
	Decided bool
	// PrefersSimpler: the F test does not reject the simpler model at
	// 0.05, so the extra parameters are not supported by the data and the
	// simpler model's estimates should be preferred.
	PrefersSimpler bool
	// Verdict says the outcome in a sentence.
	Verdict string
}

// compareNested builds the Comparison of fuller against simpler.
func compareNested(simpler, fuller *Result) *Comparison {
	c := &Comparison{Simpler: simpler.Model, SimplerRSS: simpler.RSS, SimplerDOF: simpler.DOF,
		DeltaAICc: simpler.AICc - fuller.AICc}
	if !simpler.Converged() || !fuller.Converged() {
		c.F = FResult{F: math.NaN(), P: math.NaN()}
		c.Verdict = fmt.Sprintf("cannot compare with %s: a fit did not converge", simpler.Model)
		return c
	}
	c.F = CompareNested(simpler, fuller)
	if fuller.DOF >= simpler.DOF && fuller.DOF > 0 {
		// The fuller model's extra parameters all ended on bounds: it
		// estimates no more than the simpler one, and adds nothing.
		c.Decided, c.PrefersSimpler = true, true
		c.Verdict = fmt.Sprintf("%s is preferred: the extra parameters of %s ended on their bounds", simpler.Model, fuller.Model)
		return c
	}
	if math.IsNaN(c.F.P) {
		c.Verdict = fmt.Sprintf("cannot compare with %s: too few points for the F test", simpler.Model)
		return c
	}
	c.Decided, c.PrefersSimpler = true, c.F.Simpler
	if c.PrefersSimpler {
		c.Verdict = fmt.Sprintf("%s is preferred: the extra parameters of %s do not improve the fit (F test P = %.3g ≥ 0.05)",
			simpler.Model, fuller.Model, c.F.P)
	} else {
		c.Verdict = fmt.Sprintf("%s is supported over %s (F test P = %.3g < 0.05)", fuller.Model, simpler.Model, c.F.P)
	}
	return c
}
