package potency

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// DefaultConfidence is the confidence level used when a caller passes 0.
const DefaultConfidence = 0.95

// Interval is a closed interval [Lo, Hi]; both are NaN when it is undefined.
type Interval struct {
	Lo, Hi float64
}

// Pow10 back-transforms a log10 interval to the linear scale.
func (iv Interval) Pow10() Interval {
	return Interval{math.Pow(10, iv.Lo), math.Pow(10, iv.Hi)}
}

// Contains reports whether Lo ≤ x ≤ Hi.
func (iv Interval) Contains(x float64) bool { return iv.Lo <= x && x <= iv.Hi }

func nanInterval() Interval { return Interval{math.NaN(), math.NaN()} }

// TQuantile is the two-sided Student t multiplier t(1 − α/2, df) for the
// confidence level 1 − α: TQuantile(10, 0.95) = 2.228139. It is NaN for
// df < 1.
func TQuantile(df int, confidence float64) float64 {
	if df < 1 {
		return math.NaN()
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(df)}.Quantile((1 + confidence) / 2)
}

// TInterval is the t interval of a mean on the log scale,
//
//	mean ± t(1 − α/2, df)·se,
//
// NaN with df < 1. Back-transform it with Pow10: log EC50 −6.0, SE 0.1 and
// df 10 give (−6.222814, −5.777186), i.e. 0.5987–1.6704 µM (FACTS §8).
func TInterval(mean, se float64, df int, confidence float64) Interval {
	t := TQuantile(df, confidence)
	if math.IsNaN(t) {
		return nanInterval()
	}
	return Interval{mean - t*se, mean + t*se}
}
