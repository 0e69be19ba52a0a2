package fit

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// The activity call by simulation (fixed seed): on flat curves the rate of
// active calls is that of the F test's α, within the binomial 99 % band;
// on clearly active curves (an effect of at least 3 noise SDs) the call is
// active in at least 99 %; and no inactive curve reports a potency.
func TestActivitySimulation(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation")
	}
	const flat, active = 400, 400
	rng := rand.New(rand.NewPCG(10, 2026))
	check := func(r *Result) {
		t.Helper()
		if r.Activity == ActivityInactive {
			ec50, _, _ := r.EC50()
			if !math.IsNaN(r.LogEC50().Estimate) || !math.IsNaN(ec50) || r.HasPotency() || r.Qualifier != "" {
				t.Errorf("inactive curve reports a potency: log_ec50 %v, EC50 %v, qualifier %q", r.LogEC50().Estimate, ec50, r.Qualifier)
			}
		}
	}
	falseActive, inconclusive := 0, 0
	for i := 0; i < flat; i++ {
		level := 100 * rng.Float64()
		c := simulatedCurve(rng, []float64{level, level, -7, 1}, 2+8*rng.Float64())
		r, err := Fit(c, nil)
		if err != nil {
			t.Fatal(err)
		}
		check(r)
		switch r.Activity {
		case ActivityActive:
			falseActive++
		case ActivityInconclusive:
			inconclusive++
			t.Logf("flat curve called inconclusive: %s", r.Reason)
		}
	}
	lo, hi := binomialBand(flat, DefaultActivityAlpha, 0.99) // bootstrap_test.go, checked against FACTS §6
	t.Logf("flat curves: %d of %d called active (99 %% band for α = %g: %d–%d), %d inconclusive",
		falseActive, flat, DefaultActivityAlpha, lo, hi, inconclusive)
	if falseActive < lo || falseActive > hi {
		t.Errorf("%d of %d flat curves called active, outside the binomial 99 %% band %d–%d of α = %g",
			falseActive, flat, lo, hi, DefaultActivityAlpha)
	}
	missed := 0
	for i := 0; i < active; i++ {
		sigma := 2 + 8*rng.Float64()
		effect := sigma * (3 + 7*rng.Float64())
		if rng.IntN(2) == 0 {
			effect = -effect
		}
		b := 50 * rng.Float64()
		truth := []float64{b, b + effect, -7.75 + 1.5*rng.Float64(), 0.7 + 1.8*rng.Float64()}
		r, err := Fit(simulatedCurve(rng, truth, sigma), nil)
		if err != nil {
			t.Fatal(err)
		}
		check(r)
		if r.Activity != ActivityActive {
			missed++
			t.Logf("active curve %v (σ %.3g) called %s: %s", truth, sigma, r.Activity, r.Reason)
		}
	}
	t.Logf("active curves (effect ≥ 3σ): %d of %d called active", active-missed, active)
	if float64(active-missed) < 0.99*active {
		t.Errorf("%d of %d clearly active curves called active, want ≥ 99 %%", active-missed, active)
	}
}

// Identical responses are inactive with no potency; the solver's status
// stays its own.
func TestIdenticalResponsesInactive(t *testing.T) {
	var c Curve
	for k := 0; k < 8; k++ {
		c.Points = append(c.Points, Point{Conc: 1e-9 * math.Pow(10, 0.5*float64(k)), Response: 0.1}, Point{Conc: 1e-9 * math.Pow(10, 0.5*float64(k)), Response: 0.1})
	}
	r, err := Fit(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Activity != ActivityInactive || !math.IsNaN(r.LogEC50().Estimate) || r.Reason == "" {
		t.Errorf("activity %s (%q), log_ec50 %v; want inactive, NaN, a reason", r.Activity, r.Reason, r.LogEC50().Estimate)
	}
	if r.Status != r.Solver.String() && r.Status != StatusConverged {
		t.Errorf("status %q is neither the solver's %q nor converged", r.Status, r.Solver)
	}
}

// With the assay window set, a significant but small effect is inactive;
// without it, the same curve is active. A small effect is read from the
// data's plateaus, not from a fitted top extrapolated beyond them.
func TestMinimumEffect(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	c := simulatedCurve(rng, []float64{0, 12, -7, 1.2}, 1)
	r, err := Fit(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Activity != ActivityActive {
		t.Fatalf("without a window: %s (%s), want active", r.Activity, r.Reason)
	}
	r, err = Fit(c, &Settings{Window: 100})
	if err != nil {
		t.Fatal(err)
	}
	if r.Activity != ActivityInactive || !math.IsNaN(r.LogEC50().Estimate) {
		t.Errorf("effect %.3g of a window of 100: %s (%s), want inactive (minimum 20)", r.Effect, r.Activity, r.Reason)
	}
	if r, _ := Fit(c, &Settings{Window: 100, MinEffect: 0.05}); r.Activity != ActivityActive {
		t.Errorf("minimum effect 5: %s (%s), want active", r.Activity, r.Reason)
	}
	for _, s := range []Settings{{ActivityAlpha: 0.6}, {ActivityAlpha: -1}, {Window: -1}, {Window: math.Inf(1)}, {MinEffect: 1.5}} {
		if err := s.Validate(); err == nil {
			t.Errorf("settings %+v accepted", s)
		}
	}
}

// An active curve whose EC50 lies beyond the tested range is reported with
// a qualifier and the bound; inside the range the qualifier is "=".
func TestQualifier(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, c := range []struct {
		L    float64
		want string
	}{{-7, "="}, {-4.0, ">"}, {-9.6, "<"}} {
		// The plateaus held at the truth pin the potency, outside the
		// range too.
		r, err := Fit(simulatedCurve(rng, []float64{0, 100, c.L, 1.5}, 0.5), &Settings{Fixed: map[string]float64{"bottom": 0, "top": 100}})
		if err != nil {
			t.Fatal(err)
		}
		if r.Activity != ActivityActive || r.Qualifier != c.want {
			t.Errorf("log_ec50 %v: activity %s, qualifier %q (log_ec50 %.3g); want active, %q", c.L, r.Activity, r.Qualifier, r.LogEC50().Estimate, c.want)
			continue
		}
		switch c.want {
		case ">":
			near(t, "bound", r.Bound, 1e-9*math.Pow(10, 4.5), 1e-12)
		case "<":
			near(t, "bound", r.Bound, 1e-9, 1e-15)
		default:
			if !math.IsNaN(r.Bound) {
				t.Errorf("bound %v for '='", r.Bound)
			}
		}
	}
}

// FTest on an exact fit: RSS₁ = 0 < RSS₀ rejects the simpler model (P = 0),
// and two exact fits leave nothing to prefer (P = 1), never NaN.
func TestFTestExactFit(t *testing.T) {
	if f := FTest(10, 9, 0, 6); f.P != 0 || !math.IsInf(f.F, 1) {
		t.Errorf("exact fuller fit: F %v, P %v; want +Inf, 0", f.F, f.P)
	}
	if f := FTest(0, 9, 0, 6); f.P != 1 || f.F != 0 || !f.Simpler {
		t.Errorf("both exact: F %v, P %v; want 0, 1", f.F, f.P)
	}
	if f := FTest(10, 6, 5, 6); !math.IsNaN(f.P) {
		t.Errorf("no degrees of freedom to test: P %v, want NaN", f.P)
	}
}

// AICc is undefined (NaN) when n − K − 1 ≤ 0; the result says so, and
// Akaike weights then cannot decide.
func TestAICcUndefined(t *testing.T) {
	if a := AICc(5, 1, 4); !math.IsNaN(a) {
		t.Errorf("AICc(n=5, p=4) = %v, want NaN (n − K − 1 = −1)", a)
	}
	if a := AICc(6, 1, 4); !math.IsNaN(a) {
		t.Errorf("AICc(n=6, p=4) = %v, want NaN (n − K − 1 = 0)", a)
	}
	var c Curve
	for k := 0; k < 6; k++ {
		conc := 1e-9 * math.Pow(10, float64(k))
		c.Points = append(c.Points, Point{Conc: conc, Response: Hill.Value([]float64{0, 100, -6.5, 1}, conc) + []float64{1, -1, 2, -2, 1, -1}[k]})
	}
	r, err := Fit(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !math.IsNaN(r.AICc) || !slices.Contains(r.Flags, FlagAICcUndefined) || len(r.Notes) == 0 {
		t.Errorf("AICc %v, flags %v, notes %q; want NaN, %s and a note", r.AICc, r.Flags, r.Notes, FlagAICcUndefined)
	}
	w := AICcWeights(r, &Result{Status: StatusConverged, AICc: 10})
	if !math.IsNaN(w[0]) || !math.IsNaN(w[1]) {
		t.Errorf("weights %v, want NaN (cannot decide)", w)
	}
}

// A fixed slope is reported as given: --fix hill=1 on falling data fits
// top below bottom rather than mapping to the twin with hill −1.
func TestFixedHillKeepsItsSign(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	c := simulatedCurve(rng, []float64{100, 0, -7, 1}, 2) // falls
	r, err := Fit(c, &Settings{Fixed: map[string]float64{"hill": 1}})
	if err != nil {
		t.Fatal(err)
	}
	h := r.HillSlope()
	if h.Estimate != 1 || !h.Fixed {
		t.Errorf("hill %v (fixed %v), want 1 as given", h.Estimate, h.Fixed)
	}
	if r.Direction != Falling || r.PlateauZero < r.PlateauHigh {
		t.Errorf("direction %q, plateaus %v → %v; want falling from 100 to 0", r.Direction, r.PlateauZero, r.PlateauHigh)
	}
}

// Falling curves say so, and their plateaus are named by place: the plateau
// at zero concentration and the one at high concentration.
func TestDirectionAndPlateaus(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	for _, c := range []struct {
		truth []float64
		dir   Direction
		label string
	}{{[]float64{0, 100, -7, 1}, Rising, "EC50"}, {[]float64{0, 100, -7, -1}, Falling, "IC50"}} {
		r, err := Fit(simulatedCurve(rng, c.truth, 2), nil)
		if err != nil {
			t.Fatal(err)
		}
		zero, high := Hill.Value(c.truth, 0), Hill.Value(c.truth, 1)
		if r.Direction != c.dir || r.Direction.PotencyLabel() != c.label {
			t.Errorf("truth %v: direction %q (%s), want %q (%s)", c.truth, r.Direction, r.Direction.PotencyLabel(), c.dir, c.label)
		}
		near(t, "plateau_zero", r.PlateauZero, zero, 3)
		near(t, "plateau_high", r.PlateauHigh, high, 3)
	}
	// Hill5 with hill < 0 and bottom above top is a partial agonist rising
	// from 0.8 to 53: whichever of bottom and top the parameters call
	// which, the plateaus by place and the direction read right.
	c := modelCurve(rng, Hill5, []float64{53, 0.8, -6.5, -1.2, 0.6}, 1)
	r, err := Fit(c, &Settings{Model: Hill5})
	if err != nil {
		t.Fatal(err)
	}
	if r.Direction != Rising || math.Abs(r.PlateauZero-0.8) > 3 || math.Abs(r.PlateauHigh-53) > 3 {
		t.Errorf("hill5: direction %q, plateaus %v → %v; want rising from 0.8 to 53", r.Direction, r.PlateauZero, r.PlateauHigh)
	}
}

// An EC50 on its search box is flagged, and the far plateau is judged on
// the data: a curve measured up to its midpoint is flagged
// top_not_reached, a curve that starts half way up bottom_not_reached.
func TestEdgeFlags(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	r, err := Fit(simulatedCurve(rng, []float64{0, 100, -5, 1}, 2), nil) // midpoint at 10 µM, range to 31.6 µM
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(r.Flags, FlagTopNotReached) {
		t.Errorf("partial rising curve: flags %v, want %s", r.Flags, FlagTopNotReached)
	}
	r, err = Fit(simulatedCurve(rng, []float64{0, 100, -8.6, 1}, 2), nil) // starts half way up
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(r.Flags, FlagBottomNotReached) {
		t.Errorf("curve starting half way: flags %v, want %s", r.Flags, FlagBottomNotReached)
	}
	// A step beyond the highest concentration: the potency runs to its box.
	var c Curve
	for k := 0; k < 8; k++ {
		conc := 1e-9 * math.Pow(10, 0.5*float64(k))
		y := 2 * rng.NormFloat64()
		if k == 7 {
			y += 40
		}
		c.Points = append(c.Points, Point{Conc: conc, Response: y}, Point{Conc: conc, Response: y + rng.NormFloat64()})
	}
	r, err = Fit(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	set, _ := (&Settings{}).resolve()
	lower, upper := make([]float64, 4), make([]float64, 4)
	set.bounds(r.design, lower, upper)
	if L := r.theta()[iLogEC]; atEdge(L, lower[iLogEC], upper[iLogEC]) && !slices.Contains(r.Flags, FlagEC50AtLimit) {
		t.Errorf("log_ec50 %v on its box [%v, %v] not flagged: %v", L, lower[iLogEC], upper[iLogEC], r.Flags)
	}
}

// Concentrations or an EC50 outside 1 fM–0.1 M are flagged with a note that
// suggests a unit mistake: nanomolar numbers sent as molar.
func TestImplausibleConcentration(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	c := simulatedCurve(rng, []float64{0, 100, -7, 1}, 2)
	r, err := Fit(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if slices.Contains(r.Flags, FlagImplausibleConc) {
		t.Errorf("molar data flagged: %v", r.Notes)
	}
	for i := range c.Points {
		c.Points[i].Conc *= 1e9 // nM numbers taken as M
	}
	r, err = Fit(c, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(r.Flags, FlagImplausibleConc) || len(r.Notes) == 0 {
		t.Errorf("concentrations up to %g M: flags %v, notes %q; want %s", 31.6, r.Flags, r.Notes, FlagImplausibleConc)
	}
}

// A Hill5 or Bell result compares itself with the Hill fit it nests and
// says which the data prefer: on Hill data, Hill.
func TestComparisonPrefersSimpler(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	c := simulatedCurve(rng, []float64{0, 100, -7, 1}, 3)
	r, err := Fit(c, &Settings{Model: Hill5})
	if err != nil {
		t.Fatal(err)
	}
	cmp := r.Comparison
	if cmp == nil || cmp.Simpler != Hill || !cmp.Decided || !cmp.PrefersSimpler || cmp.Verdict == "" {
		t.Fatalf("comparison %+v, want one preferring hill", cmp)
	}
	if h, _ := Fit(c, nil); h.Comparison != nil {
		t.Errorf("hill compares with itself: %+v", h.Comparison)
	}
}
