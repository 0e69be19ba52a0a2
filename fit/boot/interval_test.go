package boot

import (
	"context"
	"math"
	"slices"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.10g, want %.10g ± %g", what, got, want, tol)
	}
}

// FACTS §6 "Jackknife a (mean)": the acceleration of the sample mean from
// its leave-one-out values.
func TestAccelerationFACTS(t *testing.T) {
	x := []float64{2.1, 3.4, 1.9, 5.6, 2.8, 7.3, 4.4, 3.0, 9.8, 2.5}
	var sum float64
	for _, v := range x {
		sum += v
	}
	near(t, "mean", sum/10, 4.28, 1e-12)
	jack := make([]float64, len(x))
	for i, v := range x {
		jack[i] = (sum - v) / 9
	}
	near(t, "a", Acceleration(jack), 0.05897123, 1e-7)
	if a := Acceleration([]float64{1, 1, 1}); a != 0 {
		t.Errorf("acceleration of constant jackknife = %v, want 0", a)
	}
}

// FACTS §6 "BCa levels, α 0.05" and "z0".
func TestBCaLevelsFACTS(t *testing.T) {
	for _, c := range []struct{ z0, a, lo, hi, tol float64 }{
		{0, 0, 0.025, 0.975, 1e-9},
		{0.1, 0, 0.0392070, 0.9846123, 1e-6},
		{0.1, 0.05897123, 0.0574991, 0.9927535, 1e-6},
		{-0.05, 0.05, 0.0302993, 0.9803780, 1e-6},
	} {
		lo, hi := BCaLevels(c.z0, c.a, 0.95)
		near(t, "α1", lo, c.lo, c.tol)
		near(t, "α2", hi, c.hi, c.tol)
	}
	// 54 % of θ* below θ̂ gives z0 = Φ⁻¹(0.54).
	sample := make([]float64, 100)
	for i := range sample {
		sample[i] = float64(i)
	}
	near(t, "z0", BiasCorrection(sample, 53.5), 0.100434, 1e-6)
	// Ties count half: 50 below, 1 tie → 50.5 %.
	near(t, "z0 with a tie", BiasCorrection(sample, 50), 0.0125335, 1e-6)
}

// The (B + 1)q rule (FACTS §6 [CP]): with B = 999 the 0.025 quantile is the
// 25th order statistic exactly.
func TestQuantileRule(t *testing.T) {
	s := make([]float64, 999)
	for i := range s {
		s[i] = float64(i + 1)
	}
	near(t, "q 0.025", Quantile(s, 0.025), 25, 1e-12)
	near(t, "q 0.975", Quantile(s, 0.975), 975, 1e-12)
	near(t, "interpolated", Quantile(s, 0.5005), 500.5, 1e-9)
	near(t, "clamped low", Quantile(s, 1e-6), 1, 0)
	near(t, "clamped high", Quantile(s, 1-1e-6), 999, 0)
	lo, hi := Percentile(s, 0.95)
	near(t, "percentile lo", lo, 25, 1e-12)
	near(t, "percentile hi", hi, 975, 1e-12)
	// With z0 = 0 and a = 0, BCa is the percentile interval.
	jack := []float64{1, 2, 3, 4, 5} // symmetric: a = 0
	blo, bhi := BCa(s, 500, jack, 0.95)
	near(t, "BCa = percentile lo", blo, lo, 1e-9)
	near(t, "BCa = percentile hi", bhi, hi, 1e-9)
}

// Run gives the same results in slot order whatever the number of workers.
func TestRunIndependentOfWorkers(t *testing.T) {
	run := func(workers int) []float64 {
		out := make([]float64, 1000)
		err := Run(context.Background(), len(out), workers, func() func(int) {
			s := NewStream()
			return func(b int) {
				s.Reset(42, b)
				out[b] = s.Float64() + float64(s.IntN(1000))
			}
		})
		if err != nil {
			t.Fatal(err)
		}
		return out
	}
	one := run(1)
	for _, w := range []int{2, 3, 7} {
		if got := run(w); !slices.Equal(got, one) {
			t.Fatalf("%d workers differ from 1", w)
		}
	}
	// Different resamples and seeds get different streams.
	s := NewStream()
	s.Reset(42, 0)
	a := s.Uint64()
	s.Reset(42, 1)
	b := s.Uint64()
	s.Reset(43, 0)
	c := s.Uint64()
	if a == b || a == c {
		t.Errorf("streams collide: %x %x %x", a, b, c)
	}
}
