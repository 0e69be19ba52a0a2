package fit

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// The case scheme is refused, before any work, for data with fewer than
// MinCaseReplicates points at some concentration: single points (where
// every resample would equal the data) and duplicates alike, by Bootstrap
// and by FitBatch, with a *SettingError on bootstrap.scheme that names the
// residual scheme. At MinCaseReplicates it runs.
func TestCaseSchemeRefusedWithFewReplicates(t *testing.T) {
	truth := []float64{0, 100, -7, 1}
	for _, reps := range []int{1, 2, 3, MinCaseReplicates - 1} {
		c := replicatedCurve(rand.New(rand.NewPCG(1, uint64(reps))), truth, 5, reps)
		r, err := Fit(c, nil)
		if err != nil || !r.Converged() {
			t.Fatalf("%d replicates: %v %v", reps, err, r.Status)
		}
		err = Bootstrap(context.Background(), r, &BootSettings{Resamples: 50, Scheme: SchemeCase})
		se, ok := errors.AsType[*SettingError](err)
		if !ok || se.Field != "bootstrap.scheme" || !errors.Is(err, ErrInvalidInput) || !strings.Contains(err.Error(), "residual scheme") {
			t.Errorf("%d replicates: error %v, want a *SettingError on bootstrap.scheme pointing to the residual scheme", reps, err)
		}
		if r.Boot != nil || !math.IsNaN(r.Params[0].BootLo) {
			t.Errorf("%d replicates: a refused bootstrap left an interval behind", reps)
		}
		_, err = FitBatch(context.Background(), []Curve{c}, nil, &BootSettings{Resamples: 50, Scheme: SchemeCase}, 1, nil)
		if ce, ok := errors.AsType[*CurveError](err); !ok || ce.Index != 0 {
			t.Errorf("%d replicates: FitBatch error %v, want a *CurveError for curve 0", reps, err)
		} else if se, ok := errors.AsType[*SettingError](err); !ok || se.Field != "bootstrap.scheme" {
			t.Errorf("%d replicates: FitBatch error %v does not name bootstrap.scheme", reps, err)
		}
	}
	c := replicatedCurve(rand.New(rand.NewPCG(1, 2)), truth, 5, MinCaseReplicates)
	r, _ := Fit(c, nil)
	if err := Bootstrap(context.Background(), r, &BootSettings{Resamples: 50, Scheme: SchemeCase}); err != nil || r.Boot == nil {
		t.Errorf("%d replicates: %v, want the case bootstrap to run", MinCaseReplicates, err)
	}
}

// TestCaseSchemeCoverage is the simulation behind MinCaseReplicates:
// 400 curves of 10 concentrations (Hill 0, 100, −7, 1; noise SD 5), 500
// resamples each, 95 % BCa intervals. Declared before running, with the
// band of TestBootstrapCoverage (the lower end of the 99 % binomial band
// at 0.95 − 0.02, the upper end of the band at 0.95: [358, 390] of 400):
// with MinCaseReplicates points per concentration every parameter's count
// lies in the band; with duplicates every count lies below it.
//
// What the simulation gave while choosing the number (these seeds, BCa,
// counts of bottom, top, log_ec50, hill out of 400): 5 replicates 361 362
// 366 364; 6: 353 355 365 367; 7: 364 368 370 376; 8: 372 374 360 375;
// 10: 377 375 367 373; 12: 368 379 370 370 — 7 is the smallest number from
// which every tested count stays in the band, as the variance factor
// (r − 1)/r predicts: 2Φ(1.96·√(6/7)) − 1 = 0.930, and 0.926 for 6. Out of
// 200 curves, duplicates gave 148–160 and triplicates 172–177.
func TestCaseSchemeCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("coverage simulation: 2 × 400 curves × 500 resamples")
	}
	const N = 400
	lo, _ := binomialBand(N, 0.95-0.02, 0.99)
	_, hi := binomialBand(N, 0.95, 0.99)
	truth := []float64{0, 100, -7, 1}
	coverage := func(reps int) []int {
		rng := rand.New(rand.NewPCG(99, uint64(reps)))
		covered := make([]int, 4)
		for i := 0; i < N; i++ {
			c := replicatedCurve(rng, truth, 5, reps)
			r, err := Fit(c, nil)
			if err != nil || !r.Converged() {
				t.Fatalf("%d replicates, curve %d: %v %v", reps, i, err, r.Status)
			}
			// Below MinCaseReplicates Bootstrap refuses; the resampling
			// itself is what this test measures.
			if err := r.bootstrap(context.Background(), BootSettings{Resamples: 500, Scheme: SchemeCase, Interval: IntervalBCa, Seed: uint64(i)}, nil); err != nil {
				t.Fatal(err)
			}
			for j, p := range r.Params {
				if p.BootLo <= truth[j] && truth[j] <= p.BootHi {
					covered[j]++
				}
			}
		}
		return covered
	}
	for j, n := range coverage(MinCaseReplicates) {
		t.Logf("case, %d replicates, %s: %d/%d covered", MinCaseReplicates, Hill.Params()[j], n, N)
		if n < lo || n > hi {
			t.Errorf("%d replicates: %s covered %d/%d, outside [%d, %d]", MinCaseReplicates, Hill.Params()[j], n, N, lo, hi)
		}
	}
	for j, n := range coverage(2) {
		t.Logf("case, 2 replicates, %s: %d/%d covered", Hill.Params()[j], n, N)
		if n >= lo {
			t.Errorf("2 replicates: %s covered %d/%d, not below the band [%d, %d]: the refusal would be unfounded", Hill.Params()[j], n, N, lo, hi)
		}
	}
}
