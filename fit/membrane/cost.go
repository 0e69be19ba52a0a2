package membrane

import "sluice/fit/cost"

// Cost-model constants (package cost), measured on the benchmark request
// (the neuron preset, 200 channels of 50 pS, 1 mM Mg²⁺, 200
// concentrations, 1000 draws; 2026-12-02).
const (
	// costUnitsPerEval converts one evaluation of the Mg²⁺ steady-state
	// equation (one exponential) to cost units: BenchmarkCostUnit here
	// against BenchmarkCostUnit in package fit (ratio 2.2).
	costUnitsPerEval = 3
	// costUnitsPerPoint is one open-fraction evaluation and chord
	// potential, about one Hill value: a level of a four-parameter LM
	// evaluation.
	costUnitsPerPoint = 4
	// costContinueEvals is the evaluations of one continued root
	// (mgEquation.nearest): ≤ 35 halvings of a scan cell plus the cells
	// walked (measured mean 38.5 in all).
	costContinueEvals = 40
	// costWalkEvals allows each continuation series (a draw, the
	// threshold search) to walk the whole scan grid twice, as across a
	// jump between branches.
	costWalkEvals = 2 * (scanSteps + 1)
	// costScanEvals bounds one full scan: every grid point and at most
	// three roots of 100 halvings each.
	costScanEvals = scanSteps + 1 + 3*100
	// costThresholdSteps bounds ThresholdConc's steps over the API's range
	// of 1e-15 to 1 M: 1 501 steps of 0.01 decade and 60 halvings.
	costThresholdSteps = 1501 + 60
)

// Cost estimates the work of a potential prediction in cost units (package
// cost): Predict at concs concentrations, Band over draws draws of the
// open-fraction curve, and a ThresholdConc search (counted always; it is
// small). Without Mg²⁺ block every point is one open-fraction evaluation
// and a chord potential:
//
//	W = 4·(concs·(1 + draws) + 1 561)
//
// and with it the Mg²⁺ equation is evaluated, at 3 units per evaluation,
// 4 301 times per concentration for the point estimate (a full scan),
// about 40 times per concentration and draw when continuing, plus 8 002 per
// continuation series for jumps:
//
//	W += 3·(4 301·concs + draws·(40·concs + 8 002) + 40·1 561 + 8 002)
//
// It is an estimate from the sizes alone (see package cost); a draw whose
// potential jumps between branches more than once costs more.
func Cost(concs, draws int, mgBlock bool) cost.Work {
	c, d := float64(concs), float64(draws)
	w := costUnitsPerPoint * (c*(1+d) + costThresholdSteps)
	if mgBlock {
		evals := costScanEvals*c + d*(costContinueEvals*c+costWalkEvals) +
			costContinueEvals*costThresholdSteps + costWalkEvals
		w += costUnitsPerEval * evals
	}
	return cost.Work(w)
}
