package fit

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

// TestBootstrapSmallSampleCoverage: 8 concentrations with one point each
// (1 nM to 3.16 µM in half-log steps; Hill 0, 100, −7, 1; noise SD 5), so
// ν = 4 residual degrees of freedom. 400 curves, 1000 resamples, 95 %
// intervals of the residual scheme, BCa and percentile. Declared before
// running: every parameter's count lies in the 99 % binomial band at 0.95,
// [368, 390] of 400 — no small-sample allowance. Before the t calibration
// (calibration.go) these curves gave 343–355 (BCa) and 342–353
// (percentile) of 400.
func TestBootstrapSmallSampleCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("coverage simulation: 400 curves × 2 × 1000 resamples")
	}
	const N = 400
	lo, hi := binomialBand(N, 0.95, 0.99)
	truth := []float64{0, 100, -7, 1}
	rng := rand.New(rand.NewPCG(8, 8))
	covered := map[Interval][]int{IntervalBCa: make([]int, 4), IntervalPercentile: make([]int, 4)}
	for i := 0; i < N; i++ {
		var c Curve
		for l := 0; l < 8; l++ {
			conc := 1e-9 * math.Pow(10, 0.5*float64(l))
			c.Points = append(c.Points, Point{Conc: conc, Response: Hill.Value(truth, conc) + 5*rng.NormFloat64()})
		}
		for _, iv := range []Interval{IntervalBCa, IntervalPercentile} {
			r, err := Fit(c, nil)
			if err != nil || !r.Converged() {
				t.Fatalf("curve %d: %v %v", i, err, r.Status)
			}
			if err := Bootstrap(context.Background(), r, &BootSettings{Resamples: 1000, Interval: iv, Seed: uint64(i)}); err != nil {
				t.Fatal(err)
			}
			for j, p := range r.Params {
				if p.BootLo <= truth[j] && truth[j] <= p.BootHi {
					covered[iv][j]++
				}
			}
		}
	}
	for _, iv := range []Interval{IntervalBCa, IntervalPercentile} {
		for j, n := range covered[iv] {
			t.Logf("residual %s, 8 single points, %s: %d/%d covered", iv, Hill.Params()[j], n, N)
			if n < lo || n > hi {
				t.Errorf("%s %s: covered %d/%d, outside [%d, %d]", iv, Hill.Params()[j], n, N, lo, hi)
			}
		}
	}
}

// The calibration factor is t/z: 2.776445/1.959964 for ν = 4 at 95 % (t
// quantile from standard tables, e.g. Abramowitz & Stegun 1964, table
// 26.10), and widens each side about the estimate.
func TestTCalibration(t *testing.T) {
	if k := tCalibration(4, 0.95); math.Abs(k-2.776445/1.959964) > 1e-6 {
		t.Errorf("κ(4, 0.95) = %.7f, want %.7f", k, 2.776445/1.959964)
	}
	if k := tCalibration(0, 0.95); !math.IsNaN(k) {
		t.Errorf("κ(0) = %v, want NaN", k)
	}
	p := Param{Estimate: 1, BootLo: 0.5, BootHi: 2}
	p.calibrate(2)
	if p.BootLo != 0 || p.BootHi != 3 {
		t.Errorf("calibrated [0.5, 2] about 1 by 2: [%v, %v], want [0, 3]", p.BootLo, p.BootHi)
	}
}
