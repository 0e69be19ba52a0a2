package drift

import (
	"fmt"
	"math"
)

// DefaultBaselineRuns is how many leading values BaselineFrom uses when
// asked for 0.
const DefaultBaselineRuns = 20

// Baseline is the in-control target of a series: the mean and SD the
// rules standardise against.
type Baseline struct {
	Mean float64 // finite
	SD   float64 // finite, > 0
}

// Validate checks the baseline; the error names "baseline.mean" or
// "baseline.sd".
func (b Baseline) Validate() error {
	if !finite(b.Mean) {
		return fieldErr("baseline.mean", "must be finite, got %v", b.Mean)
	}
	if !finite(b.SD) || !(b.SD > 0) {
		return fieldErr("baseline.sd", "must be finite and > 0, got %v", b.SD)
	}
	return nil
}

// Z standardises x: (x − Mean)/SD.
func (b Baseline) Z(x float64) float64 { return (x - b.Mean) / b.SD }

// BaselineFrom estimates a baseline from the first n values: their mean and
// sample SD (n − 1). n = 0 means DefaultBaselineRuns (20); otherwise it must
// be at least 2 and at most len(values). The values used must be finite and
// not all equal (the error names "baseline_runs" or "values[i]").
func BaselineFrom(values []float64, n int) (Baseline, error) {
	if n == 0 {
		n = DefaultBaselineRuns
	}
	if n < 2 {
		return Baseline{}, fieldErr("baseline_runs", "must be at least 2, got %d", n)
	}
	if n > len(values) {
		return Baseline{}, fieldErr("baseline_runs", "needs %d values, have %d", n, len(values))
	}
	sum := 0.0
	for i, x := range values[:n] {
		if !finite(x) {
			return Baseline{}, fieldErr(fmt.Sprintf("values[%d]", i), "must be finite, got %v", x)
		}
		sum += x
	}
	m := sum / float64(n)
	ss := 0.0
	for _, x := range values[:n] {
		ss += (x - m) * (x - m)
	}
	b := Baseline{Mean: m, SD: math.Sqrt(ss / float64(n-1))}
	if !(b.SD > 0) {
		return Baseline{}, fieldErr("baseline_runs", "the first %d values are all equal: SD 0", n)
	}
	return b, nil
}
