package fit

import "sluice/fit/cost"

// Evaluation counts of the cost model (cost package), taken from above the
// measured means on simulated 30-point curves (10 levels in triplicate,
// 2–10 % noise, 40 curves per model, TestCostCountsBoundMeasuredEvaluations).
const (
	// costFitEvals4 bounds the evaluations of the first fit of a
	// four-parameter model over every start it tries (hill: measured mean
	// 15).
	costFitEvals4 = 250
	// costFitEvals5 and costFitEvals6 bound those of the five- and
	// six-parameter models, whose fits search for the global optimum
	// (search.go: every form, starts from the nested Hill fit, which is
	// counted too): hill5 measured mean 427, bell 1301.
	costFitEvals5 = 600
	costFitEvals6 = 1600
	// costRefitEvals4 is the evaluations of one warm-started bootstrap
	// refit of a four-parameter model (measured mean 7.1, max 24); each
	// further parameter doubles it (hill5, 5 parameters: 14.7; bell, 6:
	// 27.0).
	costRefitEvals4 = 8
)

// costFitEvals is E_fit(p), the evaluations of a first fit with p
// parameters.
func costFitEvals(p int) float64 {
	switch {
	case p <= 4:
		return costFitEvals4
	case p == 5:
		return costFitEvals5
	}
	return costFitEvals6
}

// Cost estimates the work of fitting one curve of points at levels
// distinct concentrations with params estimated parameters and, when bs is
// not nil, bootstrapping it (zero fields of bs mean their defaults):
//
//	W = L·p·(E_fit(p) + B·E_refit(p) + [BCa] n·E_refit(p)),  E_refit(p) = 8·2^(p−4),
//	E_fit(p) = 250 (p ≤ 4), 600 (p = 5), 1600 (p ≥ 6)
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
	evals := costFitEvals(params)
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
