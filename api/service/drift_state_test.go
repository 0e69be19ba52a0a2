package service

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// TestDriftAdvanceIsFull: a plate that arrives in time order is judged
// from the charts' stored states (advanceDrift) with exactly the result of
// the full re-evaluation — the same chart rows (status, baseline, next
// state) and the same violations, bit for bit — over a random assay
// history with failed plates, plates without a reference pEC50, the auto
// baselines being established and a late upward creep that trips the
// rules. A plate earlier than the last one, and the plate that
// establishes a baseline, take the full path.
func TestDriftAdvanceIsFull(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ctx := context.Background()
		s, err := New(Deps{Store: store, Observer: noObserver{}})
		if err != nil {
			t.Fatal(err)
		}
		t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
		if err := store.Write(ctx, func(w db.Writer) error {
			return w.InsertAssay(ctx, &db.Assay{ID: "S", Name: "S", CreatedAt: t0, CreatedBy: "t"})
		}); err != nil {
			t.Fatal(err)
		}
		rng := rand.New(rand.NewPCG(3, 5))
		hours := make([]int, 80)
		for i := range hours {
			hours[i] = 2 * i
		}
		hours[60], hours[61] = hours[61], hours[60] // one plate out of order
		hours = append(hours, 41)                   // and one much earlier, late
		fast := 0
		for i, h := range hours {
			at := t0.Add(time.Duration(h) * time.Hour)
			p := &db.Plate{ID: fmt.Sprintf("S-%03d", i), CreatedAt: at, SubmittedBy: "t", AssayID: "S", Barcode: fmt.Sprint(i),
				Format: 96, MeasuredAt: &at, ConcUnit: "M", Mode: "agonist", Settings: []byte(`{}`), InputSHA256: "x", Status: db.PlateDone}
			creep := max(0, float64(i-50)) * 0.4
			var pec *float64
			if i%7 != 3 {
				v := 7 + 0.1*(creep+rng.NormFloat64())
				pec = &v
			}
			qc := &db.PlateQC{ZPrime: 0.7 + 0.03*rng.NormFloat64(), SignalWindow: 8 + rng.NormFloat64(), SignalToBackground: 10,
				MaxMean: 1000 + 20*rng.NormFloat64(), MaxCV: 3 + 0.3*rng.NormFloat64(), MinMean: 100 + 5*(creep+rng.NormFloat64()),
				MinCV: 4 + 0.4*rng.NormFloat64(), Pass: i%9 != 4, ReferencePEC50: pec}
			if err := store.Write(ctx, func(w db.Writer) error {
				if err := w.InsertPlate(ctx, p, nil); err != nil {
					return err
				}
				return w.SetPlateQC(ctx, p.ID, qc)
			}); err != nil {
				t.Fatal(err)
			}
			p.Figures = qc
			fig := driftFigures(p, qc)
			stored, err := store.AssayDriftCharts(ctx, "S")
			if err != nil {
				t.Fatal(err)
			}
			rows := chartsByMetric(stored)
			now := t0.Add(1000 * time.Hour)
			full, err := s.planDriftFull(ctx, "S", fig, rows, now)
			if err != nil {
				t.Fatal(err)
			}
			adv, ok, err := advanceDrift("S", fig, rows, now)
			if err != nil {
				t.Fatal(err)
			}
			inOrder := i > 0 && i != 61 && i != len(hours)-1
			if ok {
				fast++
				if !inOrder {
					t.Fatalf("plate %d (hour %d) out of order was advanced from the stored state", i, h)
				}
				samePlan(t, i, adv, full)
			}
			plan := full
			if ok && i%2 == 0 {
				plan = adv // the states the next plate reads come from both paths
			}
			if err := store.Write(ctx, func(w db.Writer) error {
				_, err := plan.record(ctx, w)
				return err
			}); err != nil {
				t.Fatal(err)
			}
		}
		if fast < 50 {
			t.Errorf("%d of %d plates advanced from the stored state, want most", fast, len(hours))
		}
		var rules int
		for _, m := range allMetrics() {
			vs, err := store.DriftViolations(ctx, "S", m)
			if err != nil {
				t.Fatal(err)
			}
			rules += len(vs)
		}
		if rules == 0 {
			t.Error("no violations recorded: the comparison saw none")
		}
	})
}

func samePlan(t *testing.T, i int, got, want *driftPlan) {
	t.Helper()
	if len(got.charts) != len(want.charts) {
		t.Fatalf("plate %d: %d charts, full %d", i, len(got.charts), len(want.charts))
	}
	bits := func(v float64) uint64 { return math.Float64bits(v) }
	for k, g := range got.charts {
		w := want.charts[k]
		if g.Metric != w.Metric || g.Status != w.Status || g.Source != w.Source || bits(g.Mean) != bits(w.Mean) || bits(g.SD) != bits(w.SD) ||
			g.State != w.State || g.PrevState != w.PrevState {
			t.Fatalf("plate %d chart %s:\nadvanced %+v\nfull     %+v", i, w.Metric, *g, *w)
		}
	}
	key := func(v db.DriftViolation) string {
		return fmt.Sprintf("%s/%s/%s %x %x %x %x %s", v.Metric, v.PlateID, v.Rule, bits(v.Value), bits(v.Z), bits(v.BaselineMean), bits(v.BaselineSD), v.BaselineSource)
	}
	var gk, wk []string
	for _, v := range got.violations {
		gk = append(gk, key(v))
	}
	for _, v := range want.violations {
		wk = append(wk, key(v))
	}
	slices.Sort(gk)
	slices.Sort(wk)
	if !slices.Equal(gk, wk) {
		t.Fatalf("plate %d violations:\nadvanced %v\nfull     %v", i, gk, wk)
	}
}
