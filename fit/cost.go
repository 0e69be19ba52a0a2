package fit

import "sluice/fit/cost"

// Evaluation counts of the cost model (cost package), taken from above the
// measured means on simulated 30-point curves (10 levels in triplicate,
// 2–10 % noise, 100 curves per model, 2026-12-02).
const (
	// costFitEvals bounds the evaluations of the first fit, over every
	// start it tries: measured means 13 (hill), 232 (hill5), 112 (bell).
	costFitEvals = 250
	// costRefitEvals4 is the evaluations of one warm-started bootstrap
	// refit of a four-parameter model (measured mean 7.1, max 24); each
	// further parameter doubles it (hill5, 5 parameters: 14.7; bell, 6:
	// 27.0).
	costRefitEvals4 = 8
)

// Cost estimates the work of fitting one curve of points at levels
// distinct concentrations with params estimated parameters and, when bs is
// not nil, bootstrapping it (zero fields of bs mean their defaults):
//
//	W = L·p·(E_fit + B·E_refit(p) + [BCa] n·E_refit(p)),  E_refit(p) = 8·2^(p−4)
//
// in cost units (L levels, p parameters, n points, B resamples; the
// jackknife of BCa refits n leave-one-out datasets). It is an estimate
// from the sizes alone (see package cost): refits that fail and restart
// from the self-start values are not counted.
func Cost(points, levels, params int, bs *BootSettings) cost.Work {
	refit := float64(costRefitEvals4)
	for p := 4; p < params; p++ {
		refit *= 2
	}
	evals := float64(costFitEvals)
	if bs != nil {
		b := bs.Resamples
		if b == 0 {
			b = DefaultResamples
		}
		evals += float64(b) * refit
		if bs.Interval == "" || bs.Interval == IntervalBCa {
			evals += float64(points) * refit
		}
	}
	return cost.Work(float64(levels) * float64(params) * evals)
}

// CostOf is the sum of Cost over curves (as FitBatch fits them), counting
// each curve's points and distinct concentrations.
func CostOf(curves []Curve, params int, bs *BootSettings) cost.Work {
	var w cost.Work
	for _, c := range curves {
		w += Cost(len(c.Points), countLevels(c.Points), params, bs)
	}
	return w
}

// countLevels counts the distinct concentrations of points.
func countLevels(points []Point) int {
	seen := make(map[float64]struct{}, len(points))
	for _, p := range points {
		seen[p.Conc] = struct{}{}
	}
	return len(seen)
}
