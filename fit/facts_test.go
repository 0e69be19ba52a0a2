package fit

import (
	"math"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.10g, want %.10g ± %g", what, got, want, tol)
	}
}

// Check values of FACTS §1 ("4PL values", "Shallow slope", "Vehicle"),
// derived there from the Hill equation.
func TestHillValuesFACTS(t *testing.T) {
	th := []float64{0, 100, -6, 1}
	near(t, "4PL at EC50", Hill.Value(th, 1e-6), 50, 1e-9)
	near(t, "4PL one decade above", Hill.Value(th, 1e-5), 1000.0/11, 1e-9) // 90.909091
	near(t, "4PL one decade below", Hill.Value(th, 1e-7), 100.0/11, 1e-9)  // 9.090909
	near(t, "shallow slope", Hill.Value([]float64{10, 110, -6, 0.5}, 1e-5), 85.974693, 1e-6)
	// Vehicle: exactly the zero-concentration plateau, no NaN (FACTS §1 [CP]).
	if v := Hill.Value([]float64{3.5, 100, -6, 1.2}, 0); v != 3.5 {
		t.Errorf("rising curve at c = 0: %v, want bottom 3.5 exactly", v)
	}
	if v := Hill.Value([]float64{3.5, 100, -6, -1.2}, 0); v != 100 {
		t.Errorf("falling curve at c = 0: %v, want top 100 exactly", v)
	}
	if v := Hill5.Value([]float64{3.5, 100, -6, 1.2, 0.7}, 0); v != 3.5 {
		t.Errorf("hill5 at c = 0: %v, want 3.5", v)
	}
	if v := Bell.Value([]float64{3.5, 100, -6, 1.2, -4, 1}, 0); v != 3.5 {
		t.Errorf("bell at c = 0: %v, want 3.5", v)
	}
	// Hill5 keeps log_ec50 at the half-maximal concentration for any asymmetry.
	for _, s := range []float64{0.3, 1, 4} {
		near(t, "hill5 at its EC50", Hill5.Value([]float64{0, 100, -6, 1.3, s}, 1e-6), 50, 1e-9)
	}
}

// FACTS §1 "EC80 offset": log EC80 − log EC50 = log10(4)/nH.
func TestECFOffsetFACTS(t *testing.T) {
	for _, c := range []struct{ h, want float64 }{{1, 0.602060}, {2, 0.301030}} {
		r := &Result{Model: Hill, Params: []Param{{Estimate: 0}, {Estimate: 100}, {Estimate: -6}, {Estimate: c.h}}}
		near(t, "EC80 offset", r.LogECF(80)+6, c.want, 1e-6)
		// The same for a falling curve (80 % inhibition).
		r.Params[iHill].Estimate = -c.h
		near(t, "IC80 offset", r.LogECF(80)+6, c.want, 1e-6)
	}
	// Hill5 at s = 1 is the Hill equation.
	r := &Result{Model: Hill5, Params: []Param{{Estimate: 0}, {Estimate: 100}, {Estimate: -6}, {Estimate: 2}, {Estimate: 1}}}
	near(t, "hill5 EC80 offset at s = 1", r.LogECF(80)+6, 0.301030, 1e-6)
	// And solving the curve back at the EC_F gives F (s ≠ 1).
	th := []float64{0, 100, -6, 1.5, 0.4}
	r = &Result{Model: Hill5, Params: []Param{{Estimate: 0}, {Estimate: 100}, {Estimate: -6}, {Estimate: 1.5}, {Estimate: 0.4}}}
	near(t, "hill5 at its EC20", Hill5.Value(th, math.Pow(10, r.LogECF(20))), 20, 1e-9)
}

// FACTS §1 "Bell peak" and "Bell, unequal slopes" (concentrations in µM).
func TestBellPeakFACTS(t *testing.T) {
	const uM = -6.0
	th := []float64{0, 100, uM + 0, 1, uM + 2, 1} // EC50 1 µM, IC50 100 µM
	x, y := BellPeak(th)
	near(t, "bell peak (µM)", math.Pow(10, x-uM), 10, 1e-5) // √(EC50·IC50)
	near(t, "bell peak value", y, 82.644628, 1e-5)
	th = []float64{0, 100, uM, 2, uM + math.Log10(30), 1.5}
	x, y = BellPeak(th)
	near(t, "unequal slopes: peak (µM)", math.Pow(10, x-uM), 4.684337, 1e-4)
	near(t, "unequal slopes: peak value", y, 90.083177, 1e-4)
	near(t, "unequal slopes: half-peak (µM)", math.Pow(10, BellHalfPeak(th)-uM), 0.909651, 1e-4)
}

// FACTS §1 "F test", "AICc", "AICc choice".
func TestComparisonFACTS(t *testing.T) {
	f := FTest(120, 20, 80, 18)
	near(t, "F", f.F, 4.5, 1e-5)
	near(t, "p", f.P, 0.026012, 1e-5)
	a := AICc(20, 80, 4)
	near(t, "AIC", a-2*5.0*6/(20-5-1), 37.725887, 1e-5)
	near(t, "AICc", a, 42.011602, 1e-5)
	b := AICc(20, 120, 3)
	near(t, "AICc of the simpler", b, 46.501856, 1e-5)
	near(t, "ΔAICc", b-a, 4.490255, 1e-5)
	w := AICcWeights(&Result{Status: StatusConverged, AICc: a}, &Result{Status: StatusConverged, AICc: b})
	near(t, "Akaike weight", w[0], 0.904229, 1e-5)
}
