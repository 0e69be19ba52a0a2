package membrane

import "sluice/fit/cost"

// Cost-model constants (package cost), measured on the benchmark request
// (the neuron preset, 200 channels of 50 pS, 1 mM Mg²⁺, 200
// concentrations, 1000 draws; 2026-12-02).
const (
	// costUnitsPerEval converts one evaluation of the Mg²⁺ steady-state
	// equation (one exponential) to cost units: BenchmarkCostUnit here
	// against BenchmarkCostUnit in package fit, run alternately, gave
	// ratios of 0.7 to 2.2, median 1.3 (15 pairs).
	costUnitsPerEval = 2
	// costUnitsPerPoint is one open-fraction evaluation and chord
	// potential, about one Hill value: a level of a four-parameter LM
	// evaluation.
	costUnitsPerPoint = 4
	// costContinueEvals is the evaluations of one continued root
	// (mgEquation.nearest): ≤ 35 halvings of a scan cell plus the cells
	// walked (measured mean 38.5 in all).
	costContinueEvals = 40
	// costWalkEvals allows each continuation series (a draw, the
	// threshold search) to walk the whole scan grid once, as across a
	// jump between branches (the benchmark's draws walk about 700 cells
	// each in all).
	costWalkEvals = scanSteps + 1
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
// and with it the Mg²⁺ equation is evaluated, at 2 units per evaluation,
// 4 301 times per concentration for the point estimate (a full scan),
// about 40 times per concentration and draw when continuing, plus 4 001 per
// continuation series for jumps:
//
//	W += 2·(4 301·concs + draws·(40·concs + 4 001) + 40·1 561 + 4 001)
//
// It is an estimate from the sizes alone (see package cost), on the high
// side: for the benchmark request (200 concentrations, 1 000 draws, Mg²⁺)
// it is 26.7 M units, 1.07 s at cost.NanosecondsPerUnit, where Predict and
// Band took 0.05 s and 0.55 s (2026-12-02, one goroutine, busy machine). A
// draw whose potential jumps between branches more than once costs more.
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
