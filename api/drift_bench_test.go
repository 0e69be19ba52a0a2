package api

import (
	"context"
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// BenchmarkDrift measures the drift reads on PostgreSQL with 20 000
// assessed plates over 50 assays (one of 1 000 plates, 49 of ~388), every
// chart evaluated once: GET /v1/assays/{id}/drift on the 1 000-point
// assay, GET /v1/drift, and the evaluation a finishing plate adds to its
// job (planDrift's reads and evaluation, and the write of its charts and
// violations). Each sub-benchmark reports its p95 in ms/op-p95.
//
//	SLUICE_TEST_DATABASE_URL=… go test ./api -run XXX -bench Drift -benchtime 200x
func BenchmarkDrift(b *testing.B) {
	store := dbtest.Postgres(b)
	ts := newTestServer(b, store)
	ctx := context.Background()
	rng := rand.New(rand.NewPCG(12, 0))
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	var last []string // each assay's last plate
	for a := range 50 {
		id := fmt.Sprintf("bench-%02d", a)
		n := 388
		if a == 0 {
			n = 1000
		}
		err := store.Write(ctx, func(w db.Writer) error {
			if err := w.InsertAssay(ctx, &db.Assay{ID: id, Name: id, CreatedAt: t0, CreatedBy: "bench"}); err != nil {
				return err
			}
			for i := range n {
				at := t0.Add(time.Duration(i) * time.Hour)
				p := &db.Plate{ID: fmt.Sprintf("%s-%04d", id, i), CreatedAt: at, SubmittedBy: "bench", AssayID: id, Barcode: fmt.Sprint(i),
					Format: 96, MeasuredAt: &at, ConcUnit: "M", Mode: "agonist", Settings: []byte(`{}`), InputSHA256: "x", Status: db.PlateDone}
				if err := w.InsertPlate(ctx, p, nil); err != nil {
					return err
				}
				pec := 7 + 0.1*rng.NormFloat64()
				qc := &db.PlateQC{ZPrime: 0.7 + 0.03*rng.NormFloat64(), SignalWindow: 8 + rng.NormFloat64(), SignalToBackground: 10,
					MaxMean: 1000 + 20*rng.NormFloat64(), MaxCV: 3 + 0.3*rng.NormFloat64(), MinMean: 100 + 5*rng.NormFloat64(),
					MinCV: 4 + 0.4*rng.NormFloat64(), Pass: true, ReferencePEC50: &pec}
				if err := w.SetPlateQC(ctx, p.ID, qc); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			b.Fatal(err)
		}
		last = append(last, fmt.Sprintf("%s-%04d", id, n-1))
	}
	svc := ts.srv.svc
	evaluate := func(plateID string) {
		p, err := store.Plate(ctx, plateID)
		if err != nil {
			b.Fatal(err)
		}
		plan, err := svc.PlanDriftForBench(ctx, p)
		if err != nil {
			b.Fatal(err)
		}
		if err := store.Write(ctx, plan); err != nil {
			b.Fatal(err)
		}
	}
	for _, id := range last {
		evaluate(id)
	}
	run := func(b *testing.B, f func()) {
		d := make([]time.Duration, 0, b.N)
		for b.Loop() {
			start := time.Now()
			f()
			d = append(d, time.Since(start))
		}
		slices.Sort(d)
		b.ReportMetric(float64(d[len(d)*95/100].Microseconds())/1000, "ms/op-p95")
	}
	b.Run("chart1000", func(b *testing.B) {
		run(b, func() {
			w := ts.do("GET", "/v1/assays/bench-00/drift?metric=min_control_mean", ScopeRead, "")
			if w.Code != 200 {
				b.Fatalf("%d %s", w.Code, w.Body)
			}
		})
	})
	b.Run("overview", func(b *testing.B) {
		run(b, func() {
			w := ts.do("GET", "/v1/drift", ScopeRead, "")
			if w.Code != 200 {
				b.Fatalf("%d %s", w.Code, w.Body)
			}
		})
	})
	b.Run("evaluate1000", func(b *testing.B) {
		run(b, func() { evaluate(last[0]) })
	})
}
