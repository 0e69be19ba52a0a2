package fit

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// tCalibration returns the factor by which the residual scheme's intervals
// are widened about the estimate,
//
//	κ = t(ν, (1 + c)/2) / z((1 + c)/2),  ν = N − p,
//
// NaN when ν < 1.
//
// Why: the residual scheme draws errors from the fit's residuals, rescaled
// by √(n/(n − p)) so that their variance is the unbiased σ̂² (Davison &
// Hinkley 1997, ch. 6, resampling errors in regression), but it then treats that σ̂ as if it were σ. A
// resampled estimate is spread like θ̂ about θ with σ known, so its
// percentile (or BCa) interval has, for a nearly linear parameter, the
// width of the normal-theory interval ±z·SE, whereas σ estimated from ν
// residual degrees of freedom calls for ±t(ν)·SE — the same correction that
// turns the Wald interval's z into t (Seber & Wild 1989, ch. 5; Davison &
// Hinkley 1997, ch. 5 on the studentised pivot the plain bootstrap
// misses). Widening each side's distance from the estimate by κ keeps the
// bootstrap's asymmetry and applies that correction; κ → 1 as ν grows
// (1.049 for ν = 26, 1.416 for ν = 4).
//
// Measured (TestBootstrapSmallSampleCoverage: 8 single points, 400 curves,
// 95 % intervals): without κ, BCa covered 343–355 of 400 per parameter and
// percentile 342–353, below the binomial band 368–390; with κ, 377–386 and
// 377–387.
func tCalibration(dof int, confidence float64) float64 {
	if dof < 1 {
		return math.NaN()
	}
	q := (1 + confidence) / 2
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(dof)}.Quantile(q) / distuv.UnitNormal.Quantile(q)
}

// calibrate widens the parameter's bootstrap interval about its estimate by
// the factor k: lo = θ̂ − k(θ̂ − lo), hi = θ̂ + k(hi − θ̂).
func (p *Param) calibrate(k float64) {
	if k == 1 {
		return
	}
	p.BootLo = p.Estimate - k*(p.Estimate-p.BootLo)
	p.BootHi = p.Estimate + k*(p.BootHi-p.Estimate)
}
