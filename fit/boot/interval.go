package boot

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

var stdNormal = distuv.UnitNormal

// Quantile returns the q-quantile of the ascending sample by the (B + 1)q
// order-statistic rule (FACTS §6; Davison & Hinkley 1997, §5.2): the k-th
// smallest of B values with k = (B + 1)q, interpolated linearly between
// neighbouring order statistics and clamped to the first and last.
func Quantile(sorted []float64, q float64) float64 {
	B := len(sorted)
	if B == 0 || math.IsNaN(q) {
		return math.NaN()
	}
	k := float64(B+1) * q // 1-based position
	switch {
	case k <= 1:
		return sorted[0]
	case k >= float64(B):
		return sorted[B-1]
	}
	i := int(k) // 1 ≤ i < B
	f := k - float64(i)
	return sorted[i-1] + f*(sorted[i]-sorted[i-1])
}

// Percentile returns the percentile interval at the given confidence: the
// (1 − c)/2 and (1 + c)/2 quantiles of the ascending bootstrap sample.
func Percentile(sorted []float64, confidence float64) (lo, hi float64) {
	a := (1 - confidence) / 2
	return Quantile(sorted, a), Quantile(sorted, 1-a)
}

// BiasCorrection returns z₀ = Φ⁻¹(#{θ* < θ̂}/B), ties counted as half
// (FACTS §6, DiCiccio & Efron 1996, eq. 2.8).
func BiasCorrection(sorted []float64, theta float64) float64 {
	var below float64
	for _, v := range sorted {
		if v < theta {
			below++
		} else if v == theta {
			below += 0.5
		}
	}
	return stdNormal.Quantile(below / float64(len(sorted)))
}

// Acceleration returns the jackknife estimate of the BCa acceleration,
//
//	a = Σ(θ₍.₎ − θ₍ᵢ₎)³ / (6·[Σ(θ₍.₎ − θ₍ᵢ₎)²]^(3/2)),
//
// θ₍ᵢ₎ the leave-one-out estimates and θ₍.₎ their mean (Efron 1987, eq. 6.6;
// FACTS §6). It is 0 when the jackknife values are all equal.
func Acceleration(jack []float64) float64 {
	var mean float64
	for _, v := range jack {
		mean += v
	}
	mean /= float64(len(jack))
	var s2, s3 float64
	for _, v := range jack {
		d := mean - v
		s2 += d * d
		s3 += d * d * d
	}
	if s2 == 0 {
		return 0
	}
	return s3 / (6 * math.Pow(s2, 1.5))
}

// BCaLevels returns the adjusted quantile levels of the BCa interval,
//
//	αᵢ = Φ(z₀ + (z₀ + z_q)/(1 − a(z₀ + z_q))),  q = (1 ∓ c)/2
//
// (Efron 1987; DiCiccio & Efron 1996, eq. 2.3; FACTS §6).
func BCaLevels(z0, a, confidence float64) (lo, hi float64) {
	adj := func(q float64) float64 {
		zq := stdNormal.Quantile(q)
		s := z0 + zq
		return stdNormal.CDF(z0 + s/(1-a*s))
	}
	return adj((1 - confidence) / 2), adj((1 + confidence) / 2)
}

// BCa returns the BCa interval from the ascending bootstrap sample, the
// estimate and its jackknife values. When z₀ is not finite (every θ* on one
// side of θ̂) the interval is undefined and NaN is returned.
func BCa(sorted []float64, theta float64, jack []float64, confidence float64) (lo, hi float64) {
	z0 := BiasCorrection(sorted, theta)
	if math.IsInf(z0, 0) || math.IsNaN(z0) {
		return math.NaN(), math.NaN()
	}
	a1, a2 := BCaLevels(z0, Acceleration(jack), confidence)
	return Quantile(sorted, a1), Quantile(sorted, a2)
}
