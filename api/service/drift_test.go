package service

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"sync"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit/drift"
)

// driftObserver counts what the service reports about drift.
type driftObserver struct {
	noObserver
	mu         sync.Mutex
	violations map[string]int // metric/rule
	out        map[string]bool
}

func (o *driftObserver) DriftViolation(assayID, metric, rule string) {
	o.mu.Lock()
	defer o.mu.Unlock()
	o.violations[assayID+"/"+metric+"/"+rule]++
}

func (o *driftObserver) AssayDrift(assayID string, out bool) {
	o.mu.Lock()
	defer o.mu.Unlock()
	o.out[assayID] = out
}

func (o *driftObserver) total() int {
	o.mu.Lock()
	defer o.mu.Unlock()
	n := 0
	for _, v := range o.violations {
		n += v
	}
	return n
}

// driftT0 is the invented assay's first experiment.
var driftT0 = time.Date(2026, 3, 2, 9, 0, 0, 0, time.UTC)

// driftPlate is small96 in assay A, measured hour hours after driftT0,
// with min controls averaging minMean (and a CV that varies with it).
func driftPlate(barcode string, hour int, minMean float64) *PlateSubmission {
	sub := small96(barcode)
	req := sub.Plate
	req.AssayID, req.MeasuredAt = "A", driftT0.Add(time.Duration(hour)*time.Hour).Format(time.RFC3339)
	for i := range req.Wells {
		w := &req.Wells[i]
		switch w.Well {
		case "A12":
			v := minMean - 1
			w.Value = &v
		case "B12":
			v := minMean + 1
			w.Value = &v
		}
	}
	raw, _ := json.Marshal(req)
	return &PlateSubmission{Form: PlateJSON, Plate: req, Raw: raw}
}

// baselineMins are 20 in-control min-control means: mean 10, SD ≈ 0.79.
var baselineMins = []float64{10, 11, 9, 10.5, 9.5, 10, 11, 9, 10.2, 9.8, 10.4, 9.6, 10, 11, 9, 10.5, 9.5, 10, 10.7, 9.3}

type driftEnv struct {
	t     *testing.T
	s     *Service
	store db.Store
	obs   *driftObserver
}

func newDriftEnv(t *testing.T, store db.Store) *driftEnv {
	obs := &driftObserver{violations: map[string]int{}, out: map[string]bool{}}
	s, err := New(Deps{Store: store, Observer: obs})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := s.CreateAssay(context.Background(), Caller{Name: "admin"}, nil, wire.CatalogueEntry{ID: "A", Name: "GABA-A α1β2γ2 FLIPR"}); err != nil {
		t.Fatal(err)
	}
	return &driftEnv{t: t, s: s, store: store, obs: obs}
}

// plate submits a plate and runs its job; it returns the plate's ID.
func (e *driftEnv) plate(barcode string, hour int, minMean float64) string {
	e.t.Helper()
	ctx := context.Background()
	_, acc, err := e.s.SubmitPlate(ctx, Caller{Name: "p"}, nil, driftPlate(barcode, hour, minMean))
	if err != nil {
		e.t.Fatal(err)
	}
	if err := e.s.RunPlateJob(ctx, acc.PlateID); err != nil {
		e.t.Fatal(err)
	}
	return acc.PlateID
}

func (e *driftEnv) violations(metric string) []db.DriftViolation {
	e.t.Helper()
	vs, err := e.store.DriftViolations(context.Background(), "A", metric)
	if err != nil {
		e.t.Fatal(err)
	}
	return vs
}

func (e *driftEnv) baseline() {
	for i, v := range baselineMins {
		e.plate(fmt.Sprintf("BL%02d", i), i, v)
	}
}

// A plate whose min control is 5 SD high records 1-3s (and 1-2s) once: a
// retried job that reaches its commit again (the drift write replayed),
// and a replayed job (the plate done), record nothing more, and the
// observer counts each recorded violation once.
func TestDriftViolationRecordedOnce(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		e := newDriftEnv(t, store)
		ctx := context.Background()
		e.baseline()
		if vs := e.violations("min_control_mean"); len(vs) != 0 {
			t.Fatalf("in-control baseline recorded %+v", vs)
		}
		id := e.plate("HIGH", 20, 14)
		vs := e.violations("min_control_mean")
		rules := map[string]bool{}
		for _, v := range vs {
			if v.PlateID != id {
				t.Errorf("violation at %s, want %s", v.PlateID, id)
			}
			rules[v.Rule] = true
		}
		if !rules["1-3s"] || !rules["1-2s"] {
			t.Fatalf("recorded %+v, want 1-2s and 1-3s at the high plate", vs)
		}
		b, _ := drift.BaselineFrom(baselineMins, 20)
		if v := vs[0]; math.Abs(v.BaselineMean-b.Mean) > 1e-9 || math.Abs(v.BaselineSD-b.SD) > 1e-9 || v.BaselineSource != db.BaselineAuto {
			t.Errorf("violation judged against %v ± %v (%s), want the auto baseline %v ± %v", v.BaselineMean, v.BaselineSD, v.BaselineSource, b.Mean, b.SD)
		}
		all := 0
		for _, m := range allMetrics() {
			all += len(e.violations(m))
		}
		if e.obs.total() != all {
			t.Errorf("observer counted %d violations, %d recorded", e.obs.total(), all)
		}
		if !e.obs.out["A"] {
			t.Error("assay A not reported out of control")
		}

		// The job's drift write again, as a retried job that redoes it.
		p, err := store.Plate(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		qc := p.Figures
		plan, err := e.s.planDrift(ctx, "A", driftFigures(p, qc))
		if err != nil {
			t.Fatal(err)
		}
		if len(plan.violations) == 0 {
			t.Fatal("the replanned write holds no violations: the check would be empty")
		}
		var news *driftNews
		if err := store.Write(ctx, func(w db.Writer) error {
			var err error
			news, err = plan.record(ctx, w)
			return err
		}); err != nil {
			t.Fatal(err)
		}
		e.s.observeDrift(news)
		if len(news.recorded) != 0 {
			t.Errorf("the retried write recorded %+v again", news.recorded)
		}
		// The replayed job finds the plate done.
		if err := e.s.RunPlateJob(ctx, id); err != nil {
			t.Fatal(err)
		}
		if got := len(e.violations("min_control_mean")); got != len(vs) {
			t.Errorf("%d violations after the retries, want %d", got, len(vs))
		}
		if e.obs.total() != all {
			t.Errorf("observer counted %d after the retries, want %d", e.obs.total(), all)
		}
	})
}

// A plate measured before others already charted takes its place in time
// order: its own violation is recorded, the chart lists it between its
// neighbours, and what was recorded before stays.
func TestDriftOutOfOrderPlate(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		e := newDriftEnv(t, store)
		ctx := context.Background()
		e.baseline()
		e.plate("LATE1", 30, 10.2)
		high := e.plate("HIGH30", 31, 14) // 1-3s
		e.plate("LATE2", 32, 9.9)
		before := e.violations("min_control_mean")
		early := e.plate("EARLY", 25, 6) // arrives last, measured before LATE1
		after := e.violations("min_control_mean")
		var mine, kept int
		for _, v := range after {
			switch v.PlateID {
			case early:
				mine++
			case high:
				kept++
			}
		}
		if mine == 0 || kept != len(before) {
			t.Errorf("early plate: %d violations; the high plate's %d of %d kept (%+v)", mine, kept, len(before), after)
		}
		ch, err := e.s.DriftChart(ctx, "A", "min_control_mean", time.Time{}, time.Time{})
		if err != nil {
			t.Fatal(err)
		}
		var order []string
		for _, p := range ch.Points[20:] {
			order = append(order, p.Barcode)
		}
		if fmt.Sprint(order) != "[EARLY LATE1 HIGH30 LATE2]" {
			t.Errorf("plates after the baseline in order %v", order)
		}
		if pt := ch.Points[20]; len(pt.Violations) == 0 || pt.Violations[0] != "1-2s" {
			t.Errorf("early plate's point %+v", pt)
		}
	})
}

// A new baseline is audited and judges the chart afresh; the violations
// recorded under the old one stay as they were, with the old baseline.
func TestDriftBaselineChange(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		e := newDriftEnv(t, store)
		ctx := context.Background()
		e.baseline()
		e.plate("HIGH", 20, 14)
		before := e.violations("min_control_mean")
		if len(before) == 0 {
			t.Fatal("nothing recorded before the change")
		}
		mean, sd := 10.0, 3.0
		admin := Caller{Name: "qa-lead", Scope: "admin"}
		r, err := e.s.PutBaseline(ctx, admin, nil, "A", "min_control_mean", &wire.BaselineRequest{Mean: &mean, SD: &sd})
		if err != nil {
			t.Fatal(err)
		}
		var ch wire.DriftChart
		if err := json.Unmarshal(r.Body, &ch); err != nil {
			t.Fatal(err)
		}
		if ch.Baseline == nil || ch.Baseline.Source != db.BaselineExplicit || ch.Baseline.SD != 3 || ch.Status != string(drift.InControl) {
			t.Errorf("chart after the change: baseline %+v status %s", ch.Baseline, ch.Status)
		}
		after := e.violations("min_control_mean")
		if fmt.Sprint(after) != fmt.Sprint(before) {
			t.Errorf("recorded violations rewritten:\nbefore %+v\nafter  %+v", before, after)
		}
		es, err := store.Audit(ctx, 10)
		if err != nil {
			t.Fatal(err)
		}
		if len(es) == 0 || es[0].Action != "drift.baseline" || es[0].Actor != "qa-lead" || es[0].Target != "A" {
			t.Fatalf("latest audit entry %+v", es[0])
		}
		var detail struct {
			Metric   string
			Old, New map[string]any
		}
		if err := json.Unmarshal(es[0].Detail, &detail); err != nil {
			t.Fatal(err)
		}
		if detail.Metric != "min_control_mean" || detail.Old["source"] != "auto" || detail.Old["runs"] != 20.0 || detail.New["source"] != "explicit" || detail.New["sd"] != 3.0 {
			t.Errorf("audit detail %s", es[0].Detail)
		}
		o, err := e.s.DriftOverview(ctx)
		if err != nil {
			t.Fatal(err)
		}
		for _, c := range o.Charts {
			if c.Metric == "min_control_mean" && (c.Status != "in_control" || c.LatestViolation == nil || c.LatestViolation.Rule != "1-2s" && c.LatestViolation.Rule != "1-3s") {
				t.Errorf("overview %+v %+v", c, c.LatestViolation)
			}
		}
		// Bad requests point at the field.
		for _, tc := range []struct {
			req  wire.BaselineRequest
			want string
		}{
			{wire.BaselineRequest{}, ""},
			{wire.BaselineRequest{Mean: &mean}, "/sd"},
			{wire.BaselineRequest{Mean: &mean, SD: new(float64)}, "/sd"},
			{wire.BaselineRequest{Plates: []string{"nope", "x"}}, "/plates/0"},
			{wire.BaselineRequest{Auto: true, Runs: 1}, "/runs"},
		} {
			_, err := e.s.PutBaseline(ctx, admin, nil, "A", "min_control_mean", &tc.req)
			f := FieldsOf(err)
			if len(f) != 1 || f[0].Pointer != tc.want {
				t.Errorf("%+v: %v %+v, want a 422 at %q", tc.req, err, f, tc.want)
			}
		}
	})
}

// The chart's points are fit/drift.Evaluate on the stored series against
// the auto baseline of its first 20 accepted plates.
func TestDriftChartIsEvaluate(t *testing.T) {
	store := dbtest.SQLite(t)
	e := newDriftEnv(t, store)
	ctx := context.Background()
	e.baseline()
	for i, v := range []float64{10.8, 11.1, 10.9, 11.4, 11.2, 11.6} {
		e.plate(fmt.Sprintf("C%d", i), 20+i, v)
	}
	series, err := store.PlateQCSeries(ctx, "A", "min_mean", time.Time{}, time.Time{})
	if err != nil {
		t.Fatal(err)
	}
	values := make([]float64, len(series))
	for i, p := range series {
		values[i] = p.Value
	}
	base, err := drift.BaselineFrom(values, 20)
	if err != nil {
		t.Fatal(err)
	}
	want, err := drift.Evaluate(drift.Series(values), base, nil)
	if err != nil {
		t.Fatal(err)
	}
	got, err := e.s.DriftChart(ctx, "A", "min_control_mean", time.Time{}, time.Time{})
	if err != nil {
		t.Fatal(err)
	}
	if len(got.Points) != len(want.Points) || got.Status != string(want.Status) {
		t.Fatalf("%d points %s, want %d %s", len(got.Points), got.Status, len(want.Points), want.Status)
	}
	for i, p := range got.Points {
		w := want.Points[i]
		if float64(p.Value) != values[i] || float64(p.Z) != w.Z || float64(p.EWMA) != w.EWMA || float64(p.EWMALimits[0]) != w.EWMALo ||
			float64(p.EWMALimits[1]) != w.EWMAHi || float64(p.CUSUMHi) != w.CUSUMHi || float64(p.CUSUMLo) != w.CUSUMLo ||
			fmt.Sprint(p.Violations) != fmt.Sprint(w.Violations.Strings()) {
			t.Errorf("point %d: %+v, want %+v", i, p, w)
		}
	}
	// from/to select points, never the evaluation.
	part, err := e.s.DriftChart(ctx, "A", "min_control_mean", driftT0.Add(22*time.Hour), driftT0.Add(24*time.Hour))
	if err != nil {
		t.Fatal(err)
	}
	if len(part.Points) != 2 || part.Points[0].Z != got.Points[22].Z || part.Points[1].EWMA != got.Points[23].EWMA {
		t.Errorf("window %+v", part.Points)
	}
	if _, err := e.s.DriftChart(ctx, "A", "min_mean", time.Time{}, time.Time{}); FieldsOf(err) == nil || FieldsOf(err)[0].Parameter != "metric" {
		t.Errorf("unknown metric: %v", err)
	}
}
