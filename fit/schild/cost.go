package schild

import (
	"sluice/fit"
	"sluice/fit/cost"
)

// Evaluation counts of the cost model for the global fits (6 parameters),
// from above the values measured on the benchmark dataset (5 curves × 10
// concentrations × 3, 2026-12-02).
const (
	// costGlobalEvals is one global fit from the individual fits' values
	// (measured: 10 from a start 0.5 log units off in pK).
	costGlobalEvals = 50
	// costGlobalRefitEvals is one warm-started bootstrap refit (measured
	// mean 6.5, max 9).
	costGlobalRefitEvals = 10
)

// Cost estimates the work of Analyze(curves, s), in cost units (package
// cost): the individual four-parameter Hill fits (fit.Cost), the two
// global fits over all L levels, and B resamples refitted by both:
//
//	W = Σᵢ fit.Cost(curve i) + 6·L·(2·50 + 2·B·10)
//
// It is an estimate from the sizes alone and counts the bootstrap even
// when the analysis would stop before it (non-parallel curves).
func Cost(curves []Curve, s *Settings) cost.Work {
	var w cost.Work
	for _, c := range curves {
		w += fit.CostOf([]fit.Curve{{Points: c.Points}}, 4, nil)
	}
	levels := len(newGlobalData(curves).levels)
	B := 0
	if s != nil {
		B = s.Resamples
	}
	evals := 2*costGlobalEvals + 2*float64(B)*costGlobalRefitEvals
	return w + cost.Work(6*float64(levels)*evals)
}
