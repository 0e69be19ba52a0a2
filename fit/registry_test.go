package fit

import (
	"context"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"
)

// gompertzSpec is a model that exists only in this test: what a new model's
// file holds. It is the Gompertz curve parameterised so that log_ec50 is
// the half-maximal concentration,
//
//	y = bottom + (top − bottom)·g,  g = exp(−ln2·w),  w = 10^((log_ec50 − x)·rate),
//
// with its parameters in an order of its own, so that the fitter can only
// find them through Roles. Derivatives: ∂g/∂L = −g·ln2·w·ln10·rate,
// ∂g/∂rate = −g·ln2·w·ln10·(L − x); at x = −Inf, g is 0 for rate > 0 and 1
// for rate < 0. EC_F: g = q gives w = −ln q/ln2, x = L − log10(w)/rate.
func gompertzSpec() *Spec {
	const iL, iRate, iB, iT = 0, 1, 2, 3
	return newSpec(Spec{
		name:    "gompertz",
		summary: "half-maximal Gompertz curve (a test model)",
		params: []param{
			{name: "log_ec50", bound: boundPotency},
			{name: "rate", bound: boundSlope},
			{name: "bottom"},
			{name: "top"},
		},
		roles:    Roles{Bottom: iB, Top: iT, LogEC50: iL, Hill: iRate},
		monotone: true,
		curve: func(t []float64, x float64, g []float64) float64 {
			L, h, b, top := t[iL], t[iRate], t[iB], t[iT]
			var G, w float64
			switch {
			case math.IsInf(x, -1) && h > 0:
				G = 0
			case math.IsInf(x, -1) && h < 0:
				G = 1
			default:
				w = math.Exp(ln10 * (L - x) * h)
				G = math.Exp(-math.Ln2 * w)
			}
			if g != nil {
				g[iB], g[iT], g[iL], g[iRate] = 1-G, G, 0, 0
				if !math.IsInf(x, -1) {
					q := -(top - b) * G * math.Ln2 * w * ln10
					g[iL], g[iRate] = q*h, q*(L-x)
				}
			}
			return b + (top-b)*G
		},
		starts: hillStarts,
		logECF: func(t []float64, F float64) float64 {
			q := F / 100
			if t[iRate] < 0 {
				q = 1 - q
			}
			return t[iL] - math.Log10(-math.Log(q)/math.Ln2)/t[iRate]
		},
	})
}

// A model is one file and one registry entry: the Gompertz test model,
// registered in a registry of this test's own (the built-in one is not
// touched), parses, fits, flags, reports EC_F and bootstraps.
func TestNewModelInALocalRegistry(t *testing.T) {
	reg, err := NewRegistry(hillSpec(), gompertzSpec())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := ParseModel("gompertz"); err == nil {
		t.Fatal("the built-in registry knows the test model")
	}
	var me *ModelError
	if _, err := reg.Parse("gompertz7"); !errors.As(err, &me) || !strings.Contains(err.Error(), "want hill or gompertz") {
		t.Errorf("parse error %v, want one listing hill or gompertz", err)
	}
	spec, _ := reg.Lookup("gompertz")
	truth := []float64{-6.3, 1.4, 5, 95} // log_ec50, rate, bottom, top
	checkGradient(t, spec, truth)
	checkGradient(t, spec, []float64{-6.3, -0.9, 5, 95})

	// Duplicates ±1e-7 about the curve: an exact fit (RSS = 0) would make
	// the no-response F test NaN.
	var c Curve
	for k := 0; k < 12; k++ {
		conc := 1e-9 * math.Pow(10, 0.4*float64(k))
		for _, e := range []float64{1e-7, -1e-7} {
			c.Points = append(c.Points, Point{Conc: conc, Response: spec.Value(truth, conc) + e})
		}
	}
	c.Points = append(c.Points, Point{Conc: 0, Response: 5})
	res, err := Fit(c, &Settings{Model: "gompertz", Models: reg})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Converged() || len(res.Flags) != 0 {
		t.Fatalf("status %s, flags %v", res.Status, res.Flags)
	}
	// The level means lie on the curve: the estimates are the truth to the
	// solver's tolerance.
	for j, p := range res.Params {
		near(t, p.Name, p.Estimate, truth[j], 1e-6)
	}
	near(t, "LogEC50()", res.LogEC50().Estimate, -6.3, 1e-6)
	near(t, "HillSlope()", res.HillSlope().Estimate, 1.4, 1e-6)
	near(t, "Bottom()", res.Bottom().Estimate, 5, 1e-6)
	near(t, "Top()", res.Top().Estimate, 95, 1e-6)
	// EC_F from the model's closed form reproduces F on the curve.
	for _, F := range []float64{10, 50, 80} {
		y := spec.Value(truth, math.Pow(10, res.LogECF(F)))
		near(t, "response at EC_F", (y-5)/90*100, F, 1e-4)
	}
	// The slope is found through Roles and bounded by MaxHill: a step
	// between two concentrations ends on the bound, flagged.
	steep := Curve{}
	for k := 0; k < 8; k++ {
		conc := 1e-9 * math.Pow(10, float64(k))
		steep.Points = append(steep.Points, Point{Conc: conc, Response: spec.Value([]float64{-5.5, 40, 0, 100}, conc)})
	}
	sr, err := Fit(steep, &Settings{Model: "gompertz", Models: reg, MaxHill: 5})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Contains(sr.Flags, FlagHillAtBound) || sr.HillSlope().Estimate != 5 {
		t.Errorf("steep curve: rate %v, flags %v; want 5 and %s", sr.HillSlope().Estimate, sr.Flags, FlagHillAtBound)
	}
	// The bootstrap runs on the same definition.
	if err := Bootstrap(context.Background(), res, &BootSettings{Resamples: 50, Seed: 1}); err != nil {
		t.Fatal(err)
	}
	if res.Boot.Failed != 0 {
		t.Errorf("%d bootstrap refits failed", res.Boot.Failed)
	}
}

// checkGradient compares a model's analytic gradient with central
// differences (as TestJacobiansFiniteDifference does for the built-ins).
func checkGradient(t *testing.T, s *Spec, theta []float64) {
	t.Helper()
	g := make([]float64, len(theta))
	for x := -9.0; x <= -3; x += 0.37 {
		s.value(theta, x, g)
		for j := range theta {
			h := 1e-5 * math.Max(1, math.Abs(theta[j]))
			tp, tm := slices.Clone(theta), slices.Clone(theta)
			tp[j] += h
			tm[j] -= h
			fd := (s.value(tp, x, nil) - s.value(tm, x, nil)) / (2 * h)
			if d := math.Abs(fd - g[j]); d > 1e-6*math.Max(1, math.Abs(fd)) {
				t.Errorf("%s x=%.2f ∂/∂%s: analytic %.9g, finite difference %.9g", s.name, x, s.names()[j], g[j], fd)
			}
		}
	}
}

// Params hands out copies: changing what it returns changes no model.
func TestParamsIsACopy(t *testing.T) {
	for _, m := range Builtin().Names() {
		want := m.Params()
		got := m.Params()
		got[0] = "changed"
		sp := m.Spec().Params()
		sp[len(sp)-1] = "changed"
		if !slices.Equal(m.Params(), want) || !slices.Equal(m.Spec().Params(), want) {
			t.Errorf("%s: Params() is %v after its result was changed, want %v", m, m.Params(), want)
		}
	}
	names := Builtin().Names()
	names[0] = "changed"
	if Builtin().Names()[0] != Hill {
		t.Error("Names() hands out the registry's own slice")
	}
}

// The parse error lists exactly the registered models, in order.
func TestParseModelErrorListsRegistry(t *testing.T) {
	if m, err := ParseModel(""); m != Hill || err != nil {
		t.Errorf(`ParseModel("") = %q, %v; want hill`, m, err)
	}
	for _, m := range Builtin().Names() {
		if got, err := ParseModel(string(m)); got != m || err != nil {
			t.Errorf("ParseModel(%q) = %q, %v", m, got, err)
		}
	}
	_, err := ParseModel("hill7")
	if !errors.Is(err, ErrInvalidInput) {
		t.Fatalf("error %v is not ErrInvalidInput", err)
	}
	if want := `unknown model "hill7" (want hill, hill5 or bell)`; err.Error() != want {
		t.Errorf("error %q, want %q", err, want)
	}
	var me *ModelError
	if !errors.As(err, &me) || !slices.Equal(me.Valid, Builtin().Names()) {
		t.Errorf("ModelError lists %v, want %v", me, Builtin().Names())
	}
	if err := (&Settings{Model: "hill7"}).Validate(); !errors.As(err, &me) {
		t.Errorf("Settings.Validate: %v, want a ModelError", err)
	}
}

// What each built-in model declares: slope parameters (bounded by
// max_hill, flagged hill_at_bound), monotonicity and the shared roles.
func TestBuiltinDeclarations(t *testing.T) {
	cases := []struct {
		m        Model
		slopes   []string
		monotone bool
	}{
		{Hill, []string{"hill"}, true},
		{Hill5, []string{"hill"}, true},
		{Bell, []string{"hill", "hill_block"}, false},
	}
	for _, c := range cases {
		s := c.m.Spec()
		var slopes []string
		for _, j := range s.Slopes() {
			slopes = append(slopes, s.names()[j])
		}
		if !slices.Equal(slopes, c.slopes) || s.Monotone() != c.monotone {
			t.Errorf("%s: slopes %v, monotone %v; want %v, %v", c.m, slopes, s.Monotone(), c.slopes, c.monotone)
		}
		r, names := c.m.Roles(), c.m.Params()
		if names[r.Bottom] != "bottom" || names[r.Top] != "top" || names[r.LogEC50] != "log_ec50" || names[r.Hill] != "hill" {
			t.Errorf("%s: roles %+v point at %v", c.m, r, names)
		}
	}
	if !Hill.Spec().twin || Hill5.Spec().twin || Bell.Spec().twin {
		t.Error("only Hill has a twin")
	}
}

// NewRegistry refuses broken definitions.
func TestNewRegistryRefuses(t *testing.T) {
	noRole := gompertzSpec()
	noRole.roles.Hill = 7
	shared := gompertzSpec()
	shared.roles.Top = shared.roles.Bottom
	dup := gompertzSpec()
	dup.params[1].name = "log_ec50"
	for name, specs := range map[string][]*Spec{
		"empty":             nil,
		"twice":             {hillSpec(), hillSpec()},
		"role out of range": {noRole},
		"shared role":       {shared},
		"repeated name":     {newSpec(*dup)},
	} {
		if _, err := NewRegistry(specs...); err == nil {
			t.Errorf("%s: registered", name)
		}
	}
}

// EC_F solves each model back to F: on both directions of Hill and Hill5,
// and on Bell's rising limb from bottom to the peak (where EC50 is the
// half-peak of FACTS §1).
func TestLogECFSolvesBack(t *testing.T) {
	cases := []struct {
		m     Model
		theta []float64
	}{
		{Hill, []float64{2, 98, -6.5, 1.3}},
		{Hill, []float64{2, 98, -6.5, -0.7}},
		{Hill5, []float64{2, 98, -6.5, 1.3, 0.4}},
		{Hill5, []float64{2, 98, -6.5, -2, 3}},
		{Bell, []float64{0, 100, -6, 2, -6 + math.Log10(30), 1.5}},
	}
	for _, c := range cases {
		s := c.m.Spec()
		b := c.theta[iBottom]
		end := c.theta[iTop]
		if c.theta[iHill] < 0 {
			b, end = end, b
		}
		if !s.Monotone() {
			_, end = BellPeak(c.theta)
		}
		for _, F := range []float64{5, 20, 50, 90} {
			y := s.Value(c.theta, math.Pow(10, s.LogECF(c.theta, F)))
			near(t, string(c.m)+" fraction at EC_F", 100*(y-b)/(end-b), F, 1e-8)
		}
		if !math.IsNaN(s.LogECF(c.theta, 100)) || !math.IsNaN(s.LogECF(c.theta, 0)) {
			t.Errorf("%s: EC_F defined outside (0, 100)", c.m)
		}
	}
	th := cases[4].theta
	near(t, "bell EC50 is the half-peak", Bell.Spec().LogECF(th, 50), BellHalfPeak(th), 0)
}
