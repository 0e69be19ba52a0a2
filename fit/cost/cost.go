// Package cost is the unit of the numerics' cost model. fit.Cost,
// schild.Cost and membrane.Cost estimate the CPU work of a request from its
// size alone, before anything runs, so that the service layer can compare
// it with its budgets (answer now, queue, or refuse).
//
// The estimates are deliberately simple and err on the high side: they
// count the evaluations a typical run needs, with typical counts taken
// from the larger of the measured means (they are said where they are
// used), and ignore what is cheap next to them. They are not promises: a
// hard dataset (a refit that fails and restarts from the self-start
// values, a fit that needs every start) can exceed them, and an easy one
// needs several times less.
package cost

// Work is an amount of CPU work in units. One unit is one level × one
// parameter of one Levenberg–Marquardt evaluation: evaluating a curve
// model with its gradient at one concentration, and that level's share of
// the QR factorisation and step, costs about as many units as the model
// has parameters. Other work is converted to units by measured ratios
// (membrane.Cost says how).
type Work float64

// NanosecondsPerUnit is the CPU time of one unit on one core, from
// BenchmarkCostUnit in package fit (a warm-started four-parameter Hill
// refit of 10 levels, divided by levels × parameters × evaluations):
// measured 2026-12-02 on the development machine (2 shared AMD EPYC
// cores, load ≈ 9), 39.7 ns median of 5 (33–46 ns). In the same runs the
// B = 1000 BCa bootstrap of that curve (BenchmarkBootstrap1000), costed at
// 339 600 units = 13.6 ms, took 13.0 ms (median). Recalibrate on the
// deployment's hardware.
const NanosecondsPerUnit = 40

// Seconds is the single-core time w is expected to take: w ·
// NanosecondsPerUnit. Divide by the number of workers for the wall time
// of the parallel parts (bootstraps, bands).
func (w Work) Seconds() float64 { return float64(w) * NanosecondsPerUnit * 1e-9 }
