package potency

import "math"

// LogMean summarises log10 potencies (log EC50 in log10 M, or any log10
// ratio-scale quantity).
type LogMean struct {
	N    int
	Mean float64 // mean of the log10 values
	// SD is the sample SD (n − 1 denominator); NaN for n < 2.
	SD float64
	// SE = SD/√n; NaN for n < 2.
	SE float64
	// DF = n − 1, the degrees of freedom of the t interval.
	DF int
	// CI is the t interval on the log mean (see TInterval), at the
	// confidence the caller chose; NaN for n < 2.
	CI         Interval
	Confidence float64
}

// GeoMean is the geometric mean on the linear scale, 10^Mean.
func (m LogMean) GeoMean() float64 { return math.Pow(10, m.Mean) }

// GeoCI is CI back-transformed: an asymmetric interval around GeoMean.
func (m LogMean) GeoCI() Interval { return m.CI.Pow10() }

// PMean is the mean p-value (pEC50 for log EC50s), −Mean.
func (m LogMean) PMean() float64 { return -m.Mean }

// MeanLog summarises log10 values: their mean, sample SD and the t interval
// of the mean at the confidence level (0 means DefaultConfidence; otherwise
// in (0, 1)). It needs at least one value; every value must be finite
// (the error names "values[i]").
func MeanLog(logs []float64, confidence float64) (LogMean, error) {
	conf, err := checkConfidence(confidence)
	if err != nil {
		return LogMean{}, err
	}
	if len(logs) == 0 {
		return LogMean{}, fieldErr("values", "need at least one value")
	}
	for i, x := range logs {
		if !finite(x) {
			return LogMean{}, fieldErr(indexed("values", i), "must be finite, got %v", x)
		}
	}
	return meanLog(logs, conf), nil
}

// meanLog is MeanLog on values known to be finite, len ≥ 1.
func meanLog(logs []float64, conf float64) LogMean {
	n := len(logs)
	m := LogMean{N: n, Mean: mean(logs), SD: math.NaN(), SE: math.NaN(), DF: n - 1, CI: nanInterval(), Confidence: conf}
	if n >= 2 {
		m.SD = sd(logs, m.Mean)
		m.SE = m.SD / math.Sqrt(float64(n))
		m.CI = TInterval(m.Mean, m.SE, m.DF, conf)
	}
	return m
}

// GeoMean is the geometric mean of positive values (molar potencies),
// 10^(mean of log10 x): 1, 2 and 4 µM give 2 µM (FACTS §8). Values must be
// finite and > 0 (the error names "values[i]").
func GeoMean(x []float64) (float64, error) {
	if len(x) == 0 {
		return math.NaN(), fieldErr("values", "need at least one value")
	}
	logs := make([]float64, len(x))
	for i, v := range x {
		if !(v > 0) || !finite(v) {
			return math.NaN(), fieldErr(indexed("values", i), "must be finite and > 0, got %v", v)
		}
		logs[i] = math.Log10(v)
	}
	return math.Pow(10, mean(logs)), nil
}

func mean(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

// sd is the sample SD about m, by the two-pass formula (no cancellation).
func sd(x []float64, m float64) float64 {
	ss := 0.0
	for _, v := range x {
		ss += (v - m) * (v - m)
	}
	return math.Sqrt(ss / float64(len(x)-1))
}
