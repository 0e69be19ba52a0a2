package potency

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
	"time"
)

func day(d int) time.Time { return time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC).AddDate(0, 0, d) }

func active(log float64, d int) Run {
	return Run{LogEC50: log, Activity: Active, Qualifier: Equal, MeasuredAt: day(d)}
}

// The summary's numbers equal those computed by hand from the usable runs;
// each excluded run is counted once under its first reason, and the window
// takes the most recent runs by experiment time, not by input order.
func TestSummarizeHistory(t *testing.T) {
	runs := []Run{
		active(-6.9, 9), // usable, given out of time order
		active(-7.0, 1),
		active(-7.2, 2),
		{LogEC50: -5, Activity: Active, Qualifier: Equal, Superseded: true, Rejected: true, MeasuredAt: day(3)}, // superseded wins
		active(-7.1, 4),
		{LogEC50: -4, Activity: Active, Qualifier: Greater, MeasuredAt: day(5)}, // qualified
		{LogEC50: math.NaN(), Activity: Inactive, MeasuredAt: day(6)},           // inactive
		{LogEC50: math.NaN(), Activity: Inconclusive, MeasuredAt: day(6)},       // inconclusive
		{LogEC50: -9, Activity: Active, Qualifier: Equal, Rejected: true},       // rejected
		{LogEC50: -9, Activity: Active, Qualifier: Equal, PlateQCFailed: true},  // plate failed
		active(-6.8, 7),
		active(-7.3, 8),
		active(-6.95, 10),
	}
	h, err := Summarize(runs, &HistorySettings{MSRWindow: 4})
	if err != nil {
		t.Fatal(err)
	}
	wantReasons := []Reason{Usable, Usable, Usable, ReasonSuperseded, Usable, ReasonQualified, ReasonInactive,
		ReasonInconclusive, ReasonRejected, ReasonPlateQCFailed, Usable, Usable, Usable}
	if !slices.Equal(h.Reasons, wantReasons) {
		t.Errorf("reasons %q, want %q", h.Reasons, wantReasons)
	}
	if want := []int{1, 2, 4, 10, 11, 0, 12}; !slices.Equal(h.Usable, want) {
		t.Errorf("usable %v, want %v (time order)", h.Usable, want)
	}
	want := Excluded{Superseded: 1, Rejected: 1, PlateQCFailed: 1, Inactive: 1, Inconclusive: 1, Qualified: 1}
	if h.Excluded != want || h.Excluded.Total() != 6 {
		t.Errorf("excluded %+v, want %+v", h.Excluded, want)
	}
	// By hand: the seven usable logs.
	logs := []float64{-7.0, -7.2, -7.1, -6.8, -7.3, -6.9, -6.95}
	m := 0.0
	for _, x := range logs {
		m += x
	}
	m /= 7
	ss := 0.0
	for _, x := range logs {
		ss += (x - m) * (x - m)
	}
	s := math.Sqrt(ss / 6)
	if h.N != 7 {
		t.Fatalf("n = %d, want 7", h.N)
	}
	near(t, "mean", h.Log.Mean, m, 1e-12)
	near(t, "sd", h.Log.SD, s, 1e-12)
	near(t, "geo mean", h.GeoMeanEC50, math.Pow(10, m), 1e-20)
	near(t, "pEC50 mean", h.PEC50Mean, -m, 1e-12)
	tq := TQuantile(6, 0.95)
	near(t, "CI lo", h.GeoMeanCI.Lo, math.Pow(10, m-tq*s/math.Sqrt(7)), 1e-20)
	near(t, "CI hi", h.GeoMeanCI.Hi, math.Pow(10, m+tq*s/math.Sqrt(7)), 1e-20)
	near(t, "MSR overall", h.MSROverall, math.Pow(10, 2*math.Sqrt2*s), 1e-12)
	// The window: the last four by time are −6.8, −7.3, −6.9, −6.95.
	w := []float64{-6.8, -7.3, -6.9, -6.95}
	wm := (w[0] + w[1] + w[2] + w[3]) / 4
	wss := 0.0
	for _, x := range w {
		wss += (x - wm) * (x - wm)
	}
	if h.MSRRuns != 4 {
		t.Errorf("MSR runs %d, want 4", h.MSRRuns)
	}
	near(t, "MSR window", h.MSR, math.Pow(10, 2*math.Sqrt2*math.Sqrt(wss/3)), 1e-12)

	// The default window is 6; failed plates can be let in.
	h, err = Summarize(runs, &HistorySettings{IncludeFailedPlates: true})
	if err != nil {
		t.Fatal(err)
	}
	if h.N != 8 || h.Excluded.PlateQCFailed != 0 || h.MSRRuns != 6 || h.Settings.MSRWindow != DefaultMSRWindow {
		t.Errorf("with failed plates: n %d, excluded %+v, MSR runs %d, window %d", h.N, h.Excluded, h.MSRRuns, h.Settings.MSRWindow)
	}
}

// With fewer than three usable runs the MSRs are NaN (null in JSON), with
// one run the interval is; with none every statistic is NaN and nothing
// fails.
func TestSummarizeShortHistories(t *testing.T) {
	h, err := Summarize([]Run{active(-7, 1), active(-7.2, 2)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if h.N != 2 || !math.IsNaN(h.MSR) || !math.IsNaN(h.MSROverall) || math.IsNaN(h.GeoMeanCI.Lo) {
		t.Errorf("two runs: n %d, MSR %v, overall %v, CI %v", h.N, h.MSR, h.MSROverall, h.GeoMeanCI)
	}
	h, err = Summarize([]Run{active(-7, 1)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if h.N != 1 || h.GeoMeanEC50 != 1e-7 || !math.IsNaN(h.Log.SD) || !math.IsNaN(h.GeoMeanCI.Hi) {
		t.Errorf("one run: n %d, GM %v, SD %v, CI %v", h.N, h.GeoMeanEC50, h.Log.SD, h.GeoMeanCI)
	}
	h, err = Summarize([]Run{{Activity: Inactive, LogEC50: math.NaN()}}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if h.N != 0 || !math.IsNaN(h.GeoMeanEC50) || !math.IsNaN(h.PEC50Mean) || h.Excluded.Inactive != 1 {
		t.Errorf("no usable run: n %d, GM %v, pEC50 %v, excluded %+v", h.N, h.GeoMeanEC50, h.PEC50Mean, h.Excluded)
	}
}

// Bad input is an error that names the field; nothing is summarised.
func TestSummarizeInvalid(t *testing.T) {
	for _, c := range []struct {
		runs  []Run
		set   *HistorySettings
		field string
	}{
		{[]Run{active(-7, 1), {Activity: "maybe"}}, nil, "runs[1].activity"},
		{[]Run{{Activity: Active, Qualifier: "~", LogEC50: -7}}, nil, "runs[0].qualifier"},
		{[]Run{{Activity: Active, Qualifier: Equal, LogEC50: math.Inf(-1)}}, nil, "runs[0].log_ec50"},
		{nil, &HistorySettings{MSRWindow: 2}, "msr_window"},
		{nil, &HistorySettings{MSRWindow: -1}, "msr_window"},
		{nil, &HistorySettings{Confidence: 1}, "confidence"},
		{nil, &HistorySettings{Confidence: math.NaN()}, "confidence"},
	} {
		_, err := Summarize(c.runs, c.set)
		var fe *FieldError
		if !errors.As(err, &fe) || fe.Field != c.field || !errors.Is(err, ErrInvalid) {
			t.Errorf("want an error naming %s, got %v", c.field, err)
		}
	}
	// A qualified or inactive run needs no finite log EC50.
	if _, err := Summarize([]Run{{Activity: Active, Qualifier: Less, LogEC50: math.NaN()}, {Activity: Inactive}}, nil); err != nil {
		t.Errorf("qualified and inactive runs without a value: %v", err)
	}
}

func TestInputErrors(t *testing.T) {
	for _, c := range []struct {
		err   error
		field string
	}{
		{func() error { _, err := MeanLog(nil, 0); return err }(), "values"},
		{func() error { _, err := MeanLog([]float64{1, math.NaN()}, 0); return err }(), "values[1]"},
		{func() error { _, err := MeanLog([]float64{1}, -0.5); return err }(), "confidence"},
		{func() error { _, err := GeoMean([]float64{1e-6, 0}); return err }(), "values[1]"},
		{func() error { _, err := GeoMean(nil); return err }(), "values"},
		{func() error { _, err := Replicate([]Pair{{Run1: 1, Run2: 1}}); return err }(), "pairs"},
		{func() error { _, err := Replicate([]Pair{{Run1: 1, Run2: 1}, {Run1: 1, Run2: math.NaN()}}); return err }(), "pairs[1].run2"},
		{func() error {
			_, err := Replicate([]Pair{{Run1: math.Inf(1), Run2: 1}, {Run1: 1, Run2: 1}})
			return err
		}(), "pairs[0].run1"},
	} {
		var fe *FieldError
		if !errors.As(c.err, &fe) || fe.Field != c.field {
			t.Errorf("want an error naming %s, got %v", c.field, c.err)
		}
	}
}

// The summary does not depend on the order the runs are given in (with
// distinct times): the service may pass stored rows in any order.
func TestSummarizeOrderFree(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 0))
	runs := make([]Run, 40)
	for i := range runs {
		runs[i] = active(-7+0.2*rng.NormFloat64(), i)
		switch i % 7 {
		case 3:
			runs[i].Rejected = true
		case 5:
			runs[i].Qualifier = Greater
		}
	}
	want, err := Summarize(runs, nil)
	if err != nil {
		t.Fatal(err)
	}
	for range 5 {
		perm := rng.Perm(len(runs))
		shuffled := make([]Run, len(runs))
		for i, j := range perm {
			shuffled[i] = runs[j]
		}
		got, err := Summarize(shuffled, nil)
		if err != nil {
			t.Fatal(err)
		}
		if got.N != want.N || got.Excluded != want.Excluded || got.MSRRuns != want.MSRRuns {
			t.Fatalf("shuffled: n %d, excluded %+v; want n %d, excluded %+v", got.N, got.Excluded, want.N, want.Excluded)
		}
		for k, i := range got.Usable {
			if shuffled[i] != runs[want.Usable[k]] {
				t.Fatalf("usable run %d is not the same run after shuffling", k)
			}
		}
		near(t, "mean", got.Log.Mean, want.Log.Mean, 1e-12)
		near(t, "sd", got.Log.SD, want.Log.SD, 1e-12)
		near(t, "MSR", got.MSR, want.MSR, 1e-12)
		near(t, "MSR overall", got.MSROverall, want.MSROverall, 1e-12)
	}
}
