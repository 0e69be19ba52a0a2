// Package drift judges a series of assay control values against a baseline
// with the rules of statistical quality control: the Westgard multirule, an
// EWMA chart and a two-sided tabular CUSUM. It is numerics only; the caller
// supplies the series in time order and the baseline (target mean and SD)
// and gets, per point, the standardised value, the EWMA and CUSUM statistics,
// the rules it violates and a status.
//
// # Standardised values
//
// Every rule reads z = (x − mean)/SD, with the baseline's mean and SD. To
// chart several controls with baselines of their own together (the max and
// min controls of a plate, for R-4s), standardise them first and pass the z
// values with Baseline{Mean: 0, SD: 1}; to look only for R-4s across a
// plate's controls while each control keeps its own chart, evaluate that
// combined series with Settings.Rules = Set(RuleR4s).
//
// A point's result depends only on the points before it, so appending a
// point never changes what earlier points showed: a caller may re-evaluate
// a whole series each time a point arrives and record only what is new.
//
// # Westgard multirule
//
// Westgard, Barry, Hunt & Groth (1981), "A multi-rule Shewhart chart for
// quality control in clinical chemistry", Clin Chem 27:493–501. With strict
// inequalities, at point i:
//
//	1-2s   |zᵢ| > 2                                   warning
//	1-3s   |zᵢ| > 3                                   random error
//	2-2s   zᵢ₋₁, zᵢ > 2, or both < −2                 systematic error
//	R-4s   within one group (one run: a plate), one
//	       value > 2 and another < −2                 random error
//	4-1s   zᵢ₋₃ … zᵢ all > 1, or all < −1             systematic error
//	10-x   zᵢ₋₉ … zᵢ all > 0, or all < 0              systematic error
//
// "Consecutive" counts points of the series, across groups. A rule that
// spans several points is reported at the point that completes it, and
// again at every later point that keeps it violated.
//
// In 1981, 1-2s was the trigger: the other rules were inspected only when a
// value lay beyond ±2 SD, and a run without one was accepted. Westgard later
// dropped 1-2s as a trigger (Westgard QC, "Westgard Rules" pages), because
// the trigger hides the systematic rules' slow patterns inside ±2 SD (FACTS
// §5, cases D and E). Both modes are here: ModeWarning, the default and
// modern practice, reports 1-2s as a warning and checks every rule at every
// point; ModeTrigger is the 1981 scheme. The mode affects only the
// Westgard rules; EWMA and CUSUM are separate charts and always run.
//
// # EWMA
//
// Roberts (1959, Technometrics 1:239); limits and run lengths from Lucas &
// Saccucci (1990), "Exponentially weighted moving average control schemes:
// properties and enhancements", Technometrics 32:1–12. With target μ (the baseline mean),
// σ (the baseline SD), smoothing λ ∈ (0, 1] and width L:
//
//	e₀ = μ,   eₜ = λ·xₜ + (1 − λ)·eₜ₋₁
//	limits:   μ ± L·σ·√( λ/(2 − λ) · (1 − (1 − λ)^(2t)) )
//
// The limits are the exact, time-varying ones: narrow at the start, they
// widen to the asymptotic μ ± L·σ·√(λ/(2 − λ)). The chart signals when eₜ
// lies strictly outside them. λ 0.2 with L 3 gives an in-control average
// run length near 560 points with the asymptotic limits; the time-varying
// ones signal a little earlier (556 in arl_test.go's simulation).
//
// # CUSUM
//
// Page (1954), "Continuous inspection schemes", Biometrika 41:100–115; the
// tabular form as in Montgomery, Introduction to Statistical Quality
// Control (typical textbook presentation). On z, with reference value k
// and decision interval h (both in SD units):
//
//	C⁺₀ = C⁻₀ = 0
//	C⁺ₜ = max(0, C⁺ₜ₋₁ + zₜ − k),   C⁻ₜ = max(0, C⁻ₜ₋₁ − zₜ − k)
//
// signalling when either exceeds h. k 0.5 with h 5 gives an in-control
// average run length near 465 points and detects a 1 SD shift in about 10.
//
// Neither EWMA nor CUSUM is reset after a signal: they describe the series
// as it is, and keep signalling while a shift persists.
//
// # Random and systematic error
//
// 1-3s and R-4s point to random error (imprecision); 2-2s, 4-1s and 10-x to
// systematic error (a shift or a trend), as do EWMA and CUSUM, which exist to
// detect small persistent shifts (Westgard et al. 1981; FACTS §5). See
// Rule.Kind.
package drift
