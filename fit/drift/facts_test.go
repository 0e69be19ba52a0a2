package drift

import (
	"math"
	"slices"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if !(math.Abs(got-want) <= tol) {
		t.Errorf("%s = %.8g, want %.8g ± %g", what, got, want, tol)
	}
}

func series(values ...float64) []Point {
	p := make([]Point, len(values))
	for i, v := range values {
		p[i] = Point{Value: v}
	}
	return p
}

// FACTS §5 [DER], cases A–F: mean 100, SD 5; each case is its own series.
// want[i] lists the rules violated at point i+1 (the FACTS table counts
// from 1); every other point must violate nothing. D and E fire only without
// the 1-2s trigger. The cases are about the multirule, so only its rules
// are enabled (EWMA's signal in case C is checked below).
func TestWestgardFacts(t *testing.T) {
	base := Baseline{Mean: 100, SD: 5}
	none := RuleSet(0)
	westgardRules := Set(Rule12s, Rule13s, Rule22s, RuleR4s, Rule41s, Rule10x)
	for _, c := range []struct {
		name    string
		points  []Point
		warning []RuleSet // ModeWarning
		trigger []RuleSet // ModeTrigger
	}{
		// A: 1-2s at #3 only (z = 2.3).
		{"A", series(100.5, 98.5, 111.5, 100.5),
			[]RuleSet{none, none, Set(Rule12s), none},
			[]RuleSet{none, none, Set(Rule12s), none}},
		// B: 1-3s at #2 (z = 3.1, which is also beyond 2 SD).
		{"B", series(101, 115.5),
			[]RuleSet{none, Set(Rule12s, Rule13s)},
			[]RuleSet{none, Set(Rule12s, Rule13s)}},
		// C: 2-2s at #2 (z = 2.1, 2.4).
		{"C", series(110.5, 112),
			[]RuleSet{Set(Rule12s), Set(Rule12s, Rule22s)},
			[]RuleSet{Set(Rule12s), Set(Rule12s, Rule22s)}},
		// F: one run with two controls, z = 2.2 and −2.1: R-4s.
		{"F", []Point{{Value: 111, Group: "plate-1"}, {Value: 89.5, Group: "plate-1"}},
			[]RuleSet{Set(Rule12s), Set(Rule12s, RuleR4s)},
			[]RuleSet{Set(Rule12s), Set(Rule12s, RuleR4s)}},
		// D: z = 1.2, 1.5, 1.1, 1.3: 4-1s at #4, only without the trigger.
		{"D", series(106, 107.5, 105.5, 106.5),
			[]RuleSet{none, none, none, Set(Rule41s)},
			[]RuleSet{none, none, none, none}},
		// E: ten values above the mean, none beyond 1 SD: 10-x at #10,
		// only without the trigger.
		{"E", series(101.5, 102.5, 101, 104, 100.5, 102, 103, 101, 104.5, 101.5),
			[]RuleSet{none, none, none, none, none, none, none, none, none, Set(Rule10x)},
			[]RuleSet{none, none, none, none, none, none, none, none, none, none}},
	} {
		for _, m := range []struct {
			mode Mode
			want []RuleSet
		}{{ModeWarning, c.warning}, {ModeTrigger, c.trigger}} {
			ch, err := Evaluate(c.points, base, &Settings{Mode: m.mode, Rules: westgardRules})
			if err != nil {
				t.Fatal(err)
			}
			for i, p := range ch.Points {
				if p.Violations != m.want[i] {
					t.Errorf("%s, %s mode, #%d (z %.2f): %v, want %v", c.name, m.mode, i+1, p.Z, p.Violations.Strings(), m.want[i].Strings())
				}
			}
			if want := statusOf(m.want[len(m.want)-1]); ch.Status != want {
				t.Errorf("%s, %s mode: status %s, want %s", c.name, m.mode, ch.Status, want)
			}
		}
	}
}

// With every rule on, case C's second point also signals on the EWMA
// (λ 0.2, L 3): e₁ = 0.2·110.5 + 0.8·100 = 102.1, e₂ = 0.2·112 + 0.8·102.1 =
// 104.08, above the limit 100 + 3·5·√(0.2/1.8·(1 − 0.8⁴)) = 103.842.
func TestEWMASignalInCaseC(t *testing.T) {
	ch, err := Evaluate(series(110.5, 112), Baseline{Mean: 100, SD: 5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	p := ch.Points[1]
	near(t, "e2", p.EWMA, 104.08, 1e-12)
	near(t, "UCL at t 2", p.EWMAHi, 103.842, 1e-3)
	if want := Set(Rule12s, Rule22s, RuleEWMA); p.Violations != want {
		t.Errorf("violations %v, want %v", p.Violations.Strings(), want.Strings())
	}
}

// R-4s looks within a group only: the same values in two groups, or without
// groups, are not a range violation.
func TestR4sWithinGroupOnly(t *testing.T) {
	base := Baseline{Mean: 100, SD: 5}
	for _, pts := range [][]Point{
		{{Value: 111, Group: "p1"}, {Value: 89.5, Group: "p2"}},
		series(111, 89.5),
	} {
		ch, err := Evaluate(pts, base, nil)
		if err != nil {
			t.Fatal(err)
		}
		if ch.Points[1].Violations.Has(RuleR4s) {
			t.Errorf("R-4s across groups %q, %q", pts[0].Group, pts[1].Group)
		}
	}
	// A three-control group finds its pair whatever lies between.
	ch, err := Evaluate([]Point{{Value: 89, Group: "p"}, {Value: 100, Group: "p"}, {Value: 112, Group: "p"}}, base, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !ch.Points[2].Violations.Has(RuleR4s) {
		t.Errorf("R-4s not found across a group's middle value: %v", ch.Points[2].Violations.Strings())
	}
}

// FACTS §5: the EWMA example of the NIST/SEMATECH e-Handbook §6.3.2.4
// (target 50, s 2.0539, λ 0.3, L 3; the table's values are typical textbook
// values, the arithmetic [C]): limit factor 0.420084, UCL 52.5884 and LCL
// 47.4116, and the 20-point series to ±0.005 with no signal.
func TestEWMAFacts(t *testing.T) {
	near(t, "factor", EWMAAsymptoticFactor(0.3), 0.420084, 1e-6)
	x := []float64{52.0, 47.0, 53.0, 49.3, 50.1, 47.0, 51.0, 50.1, 51.2, 50.5, 49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1}
	want := []float64{50.60, 49.52, 50.56, 50.18, 50.16, 49.21, 49.75, 49.85, 50.26, 50.33, 50.11, 49.36, 49.52, 50.05, 49.38, 49.92, 50.73, 51.23, 51.94, 51.99}
	ch, err := Evaluate(series(x...), Baseline{Mean: 50, SD: 2.0539}, &Settings{EWMALambda: 0.3, EWMAL: 3, Rules: Set(RuleEWMA)})
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range ch.Points {
		near(t, "EWMA", p.EWMA, want[i], 0.005)
		if p.Violations != 0 {
			t.Errorf("point %d signals %v", i+1, p.Violations.Strings())
		}
		// The time-varying limits widen toward the asymptotic ones.
		near(t, "limit factor", (p.EWMAHi-50)/(3*2.0539), EWMAFactor(0.3, i+1), 1e-12)
	}
	// After 20 points (1 − λ)^40 ≈ 6e-7: the limits are the asymptotic ones
	// to the table's four decimals.
	last := ch.Points[len(ch.Points)-1]
	near(t, "UCL", last.EWMAHi, 52.5884, 1e-4)
	near(t, "LCL", last.EWMALo, 47.4116, 1e-4)
	if ch.Status != InControl {
		t.Errorf("status %s, want in_control", ch.Status)
	}
}

// The CUSUM recursion by hand on a short series: C⁺ = max(0, C⁺ + z − k),
// C⁻ = max(0, C⁻ − z − k), a signal strictly above h.
func TestCUSUMRecursion(t *testing.T) {
	z := []float64{1, 2, 3, -1, 0.5, -4, -3}
	// k 0.5, h 4:  C⁺ 0.5, 2, 4.5, 3, 3, 0, 0;  C⁻ 0, 0, 0, 0.5, 0, 3.5, 6.
	wantHi := []float64{0.5, 2, 4.5, 3, 3, 0, 0}
	wantLo := []float64{0, 0, 0, 0.5, 0, 3.5, 6}
	signal := []bool{false, false, true, false, false, false, true}
	ch, err := Evaluate(series(z...), Baseline{Mean: 0, SD: 1}, &Settings{CUSUMH: 4, Rules: Set(RuleCUSUM)})
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range ch.Points {
		near(t, "C+", p.CUSUMHi, wantHi[i], 1e-12)
		near(t, "C-", p.CUSUMLo, wantLo[i], 1e-12)
		if p.Violations.Has(RuleCUSUM) != signal[i] {
			t.Errorf("point %d: cusum signal %v, want %v", i+1, !signal[i], signal[i])
		}
	}
}

func TestRuleNamesAndKinds(t *testing.T) {
	want := map[string]Kind{"1-2s": KindWarning, "1-3s": KindRandom, "R-4s": KindRandom,
		"2-2s": KindSystematic, "4-1s": KindSystematic, "10-x": KindSystematic, "ewma": KindSystematic, "cusum": KindSystematic}
	if got := AllRules.Strings(); len(got) != len(want) {
		t.Fatalf("AllRules %v", got)
	}
	for _, r := range AllRules.Rules() {
		back, err := ParseRule(r.String())
		if err != nil || back != r {
			t.Errorf("ParseRule(%q) = %v, %v", r.String(), back, err)
		}
		if r.Kind() != want[r.String()] {
			t.Errorf("%s: kind %s, want %s", r, r.Kind(), want[r.String()])
		}
	}
	if _, err := ParseRule("2of3-2s"); err == nil {
		t.Error("ParseRule accepted an unknown rule")
	}
	if !slices.Equal(Set(Rule41s, Rule12s).Strings(), []string{"1-2s", "4-1s"}) || Set(Rule12s).Rejects() || !Set(Rule12s, RuleEWMA).Rejects() {
		t.Error("RuleSet order or Rejects is wrong")
	}
}
