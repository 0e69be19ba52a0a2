package plate

import (
	"math"
	"slices"
)

// Mean and SD (n − 1) of xs; SD is NaN for fewer than two values.
func meanSD(xs []float64) (mean, sd float64) {
	n := float64(len(xs))
	if n == 0 {
		return math.NaN(), math.NaN()
	}
	for _, x := range xs {
		mean += x
	}
	mean /= n
	if n < 2 {
		return mean, math.NaN()
	}
	var ss float64
	for _, x := range xs {
		ss += (x - mean) * (x - mean)
	}
	return mean, math.Sqrt(ss / (n - 1))
}

func median(xs []float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := slices.Clone(xs)
	slices.Sort(s)
	n := len(s)
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}

// CV returns the coefficient of variation in percent, 100·SD/mean (n − 1
// SD; FACTS §4).
func CV(xs []float64) float64 {
	m, s := meanSD(xs)
	return 100 * s / m
}
