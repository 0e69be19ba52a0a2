package drift

import (
	"errors"
	"math"
	"testing"
	"time"
)

// Bad settings, baselines and points are errors that name the field.
func TestEvaluateInvalid(t *testing.T) {
	at := func(h int) time.Time { return time.Date(2026, 5, 1, h, 0, 0, 0, time.UTC) }
	ok := []Point{{Value: 1}}
	good := Baseline{Mean: 0, SD: 1}
	for _, c := range []struct {
		points []Point
		base   Baseline
		set    *Settings
		field  string
	}{
		{ok, good, &Settings{Mode: "strict"}, "mode"},
		{ok, good, &Settings{Rules: 1 << 12}, "rules"},
		{ok, good, &Settings{EWMALambda: 1.5}, "ewma_lambda"},
		{ok, good, &Settings{EWMALambda: -0.1}, "ewma_lambda"},
		{ok, good, &Settings{EWMALambda: math.NaN()}, "ewma_lambda"},
		{ok, good, &Settings{EWMAL: -3}, "ewma_l"},
		{ok, good, &Settings{CUSUMK: -0.5}, "cusum_k"},
		{ok, good, &Settings{CUSUMH: math.Inf(1)}, "cusum_h"},
		{ok, Baseline{Mean: 0, SD: 0}, nil, "baseline.sd"},
		{ok, Baseline{Mean: 0, SD: -1}, nil, "baseline.sd"},
		{ok, Baseline{Mean: math.NaN(), SD: 1}, nil, "baseline.mean"},
		{[]Point{{Value: 1}, {Value: math.Inf(-1)}}, good, nil, "points[1].value"},
		{[]Point{{Time: at(2), Value: 1}, {Time: at(1), Value: 1}}, good, nil, "points[1].time"},
		{[]Point{{Value: 1, Group: "a"}, {Value: 1, Group: "b"}, {Value: 1, Group: "a"}}, good, nil, "points[2].group"},
		{[]Point{{Value: 1, Group: "a"}, {Value: 1}, {Value: 1, Group: "a"}}, good, nil, "points[2].group"},
	} {
		_, err := Evaluate(c.points, c.base, c.set)
		var fe *FieldError
		if !errors.As(err, &fe) || fe.Field != c.field || !errors.Is(err, ErrInvalid) {
			t.Errorf("want an error naming %s, got %v", c.field, err)
		}
	}
	// Equal times, zero times and empty series are fine.
	for _, pts := range [][]Point{nil, {{Time: at(1), Value: 1}, {Time: at(1), Value: 2}}, {{Value: 1}, {Value: 2}}} {
		ch, err := Evaluate(pts, good, nil)
		if err != nil || ch.Status != InControl || len(ch.Points) != len(pts) {
			t.Errorf("series %v: %v, %+v", pts, err, ch)
		}
	}
}

func TestDefaults(t *testing.T) {
	s, err := (*Settings)(nil).Resolve()
	if err != nil {
		t.Fatal(err)
	}
	want := Settings{Mode: ModeWarning, Rules: AllRules, EWMALambda: 0.2, EWMAL: 3, CUSUMK: 0.5, CUSUMH: 5}
	if s != want {
		t.Errorf("defaults %+v, want %+v", s, want)
	}
}

// The chart's status is the latest point's; a rule left out of Settings.Rules
// neither shows nor counts.
func TestStatus(t *testing.T) {
	base := Baseline{Mean: 100, SD: 5}
	for _, c := range []struct {
		values []float64
		rules  RuleSet
		want   Status
		last   int
	}{
		{[]float64{100, 101, 99}, 0, InControl, -1},
		{[]float64{100, 111, 99}, 0, InControl, 1},    // a 1-2s warning, then a good point
		{[]float64{100, 99, 111}, 0, Warning, 2},      // 1-2s now
		{[]float64{100, 99, 116}, 0, OutOfControl, 2}, // 1-3s now
		{[]float64{100, 99, 116}, Set(Rule12s), Warning, 2},
	} {
		ch, err := Evaluate(series(c.values...), base, &Settings{Rules: c.rules})
		if err != nil {
			t.Fatal(err)
		}
		if ch.Status != c.want || ch.LastViolation() != c.last {
			t.Errorf("%v: status %s, last violation %d; want %s, %d", c.values, ch.Status, ch.LastViolation(), c.want, c.last)
		}
	}
}

// FACTS §5's drift note, as issue 12's demo needs it: a slow upward creep
// inside ±2 SD is caught by the systematic rules (and the EWMA) long before
// any value crosses 3 SD.
func TestCreepCaughtBySystematicRules(t *testing.T) {
	var pts []Point
	for i := range 30 {
		pts = append(pts, Point{Value: 100 + 0.3*float64(i)})
	}
	ch, err := Evaluate(pts, Baseline{Mean: 100, SD: 5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	first := map[Rule]int{}
	for i, p := range ch.Points {
		for _, r := range p.Violations.Rules() {
			if _, seen := first[r]; !seen {
				first[r] = i
			}
		}
	}
	if _, ok := first[Rule13s]; ok {
		t.Errorf("1-3s fired on a creep that stays within 2 SD")
	}
	for _, r := range []Rule{Rule10x, RuleEWMA} {
		if _, ok := first[r]; !ok {
			t.Errorf("%s did not catch the creep (first violations %v)", r, first)
		}
	}
}

func TestBaselineFrom(t *testing.T) {
	b, err := BaselineFrom([]float64{98, 101, 99, 103, 97, 100, 102, 500}, 7)
	if err != nil {
		t.Fatal(err)
	}
	// FACTS §4's CV example [DER]: these seven values have mean 100 and
	// SD 2.1602 (CV 2.1602 %).
	near(t, "mean", b.Mean, 100, 1e-12)
	near(t, "sd", b.SD, 2.1602, 1e-4)
	for _, c := range []struct {
		values []float64
		n      int
		field  string
	}{
		{[]float64{1, 2, 3}, 0, "baseline_runs"}, // default 20 > 3
		{[]float64{1, 2, 3}, 1, "baseline_runs"},
		{[]float64{1, 2, 3}, -2, "baseline_runs"},
		{[]float64{4, 4, 4}, 3, "baseline_runs"},
		{[]float64{4, math.NaN(), 4}, 3, "values[1]"},
	} {
		_, err := BaselineFrom(c.values, c.n)
		var fe *FieldError
		if !errors.As(err, &fe) || fe.Field != c.field {
			t.Errorf("BaselineFrom(%v, %d): want an error naming %s, got %v", c.values, c.n, c.field, err)
		}
	}
}
