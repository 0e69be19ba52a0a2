package db_test

import (
	"context"
	"errors"
	"fmt"
	"math"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// storePlate stores a plate of assay a1 measured at `measured` (nil: none).
func storePlate(t *testing.T, s db.Store, id string, created time.Time, measured *time.Time) {
	t.Helper()
	ctx := context.Background()
	p := &db.Plate{ID: id, CreatedAt: created, SubmittedBy: "robot", AssayID: "a1", Barcode: "LK-" + id, Format: 96, MeasuredAt: measured,
		ConcUnit: "M", Mode: "agonist", Settings: []byte(`{"fit":{"model":"hill"}}`), InputSHA256: "sha-" + id, Status: db.PlateQueued}
	if err := s.Write(ctx, func(w db.Writer) error { return w.InsertPlate(ctx, p, nil) }); err != nil {
		t.Fatal(err)
	}
}

// Fits and plate curves land in one table: a compound's history is one
// query over both, by experiment time, with the estimates as columns and
// the bootstrap draws bit for bit.
func TestCurveResults(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		if err := s.Write(ctx, func(w db.Writer) error {
			for _, a := range []string{"a1", "a2"} {
				if err := w.InsertAssay(ctx, &db.Assay{ID: a, Name: a, CreatedAt: t0}); err != nil {
					return err
				}
			}
			return w.InsertCompound(ctx, &db.Compound{ID: "c1", Name: "c1", CreatedAt: t0})
		}); err != nil {
			t.Fatal(err)
		}
		day := func(d int) time.Time { return t0.AddDate(0, 0, d) }
		// Fits uploaded on days 1, 3 and 5 (assay a2 on day 5).
		draws := []float64{1, 100, -6.5, 1, 1.5, 99, -6.4, math.NaN(), 0.5, 101, -6.6, math.Inf(1)}
		for i, d := range []int{1, 3, 5} {
			assay := "a1"
			if d == 5 {
				assay = "a2"
			}
			r := run(fmt.Sprintf("fit-%d", i), day(d), assay, "c1")
			if i == 0 {
				r.BootCols, r.BootDraws = 4, draws
			}
			if err := s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, r) }); err != nil {
				t.Fatal(err)
			}
		}
		// A plate measured on day 2 but submitted on day 9, and one with
		// no measured_at submitted on day 4.
		m2 := day(2)
		storePlate(t, s, "p1", day(9), &m2)
		storePlate(t, s, "p2", day(4), nil)
		curves := []db.PlateCurve{
			{Key: "c1", CompoundID: "c1", Model: "hill", Status: "converged", LogEC50: f(-6.25), Result: []byte(`{"n":1}`), EngineVersion: "0.3.0",
				Params: []db.FitParam{{Name: "log_ec50", Estimate: f(-6.25), WaldLo: f(-6.5), WaldHi: f(-6), BootLo: f(-6.75), BootHi: f(-5.75)},
					{Name: "hill", Estimate: f(1.25), WaldLo: f(1), WaldHi: f(1.5)}},
				BootCols: 2, BootDraws: []float64{-6.2, 1.2, -6.3, 1.3}},
			{Key: "other", CompoundID: "c9", Model: "hill", Status: "no_convergence", Result: []byte(`{"n":2}`)},
		}
		for _, p := range []string{"p1", "p2", "p1"} { // p1 twice: a retried job
			if err := s.Write(ctx, func(w db.Writer) error {
				return w.FinishPlate(ctx, p, db.PlateDone, []byte(`{"pass":true}`), curves, "")
			}); err != nil {
				t.Fatal(err)
			}
		}
		cs, err := s.PlateCurves(ctx, "p1")
		if err != nil || len(cs) != 2 || cs[0].ID != "p1:c1" || cs[1].ID != "p1:other" || len(cs[0].BootDraws) != 4 {
			t.Fatalf("plate curves after a retry: %+v %v", cs, err)
		}
		c, err := s.CurveResult(ctx, "p1:c1")
		if err != nil || c.Kind != db.KindPlateCurve || c.AssayID != "a1" || !c.MeasuredAt.Equal(m2) || !c.CreatedAt.After(day(9)) ||
			*c.LogEC50.Value != -6.25 || *c.LogEC50.Lo != -6.75 || *c.Hill.Value != 1.25 || *c.Hill.Hi != 1.5 || c.Top.Value != nil ||
			c.SubmittedBy != "robot" || c.InputSHA256 != "sha-p1" || !jsonEqual(c.Settings, `{"fit":{"model":"hill"}}`) || c.Input != nil {
			t.Errorf("plate curve: %+v %v", c, err)
		}

		hist, err := s.CompoundCurves(ctx, db.CurveFilter{CompoundID: "c1", AssayID: "a1"})
		var ids []string
		for _, h := range hist {
			ids = append(ids, h.ID)
		}
		if err != nil || fmt.Sprint(ids) != "[fit-0 p1:c1 fit-1 p2:c1]" {
			t.Errorf("history of c1 in a1: %v %v", ids, err)
		}
		hist, err = s.CompoundCurves(ctx, db.CurveFilter{CompoundID: "c1", From: day(2), To: day(5).Add(time.Second)})
		ids = ids[:0]
		for _, h := range hist {
			ids = append(ids, h.ID)
		}
		if err != nil || fmt.Sprint(ids) != "[p1:c1 fit-1 p2:c1 fit-2]" {
			t.Errorf("history of c1, days 2–5: %v %v", ids, err)
		}
		if _, err := s.CompoundCurves(ctx, db.CurveFilter{CompoundID: "c1", Limit: -1}); !errors.Is(err, db.ErrInvalid) {
			t.Errorf("negative limit: %v", err)
		}

		r, err := s.FitRun(ctx, "fit-0")
		if err != nil || r.BootCols != 4 || len(r.BootDraws) != len(draws) {
			t.Fatalf("fit-0: %+v %v", r, err)
		}
		for i := range draws {
			if math.Float64bits(r.BootDraws[i]) != math.Float64bits(draws[i]) {
				t.Errorf("draw %d = %v, want %v", i, r.BootDraws[i], draws[i])
			}
		}
		if r, _ := s.FitRun(ctx, "fit-1"); r.BootDraws != nil || r.BootCols != 0 {
			t.Errorf("fit without a bootstrap has draws: %d×%d", len(r.BootDraws), r.BootCols)
		}
		if _, err := s.FitRun(ctx, "p1:c1"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("a plate curve read as a fit run: %v", err)
		}
		bad := run("bad", t0, "", "")
		bad.BootCols, bad.BootDraws = 3, []float64{1, 2, 3, 4}
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, bad) }); !errors.Is(err, db.ErrInvalid) ||
			err.Error() != `db: InsertFitRun("bad"): boot_draws: invalid value` {
			t.Errorf("draws not a whole number of rows: %v", err)
		}
	})
}

// QC figures are columns: an unbounded S/B is stored and read back as
// +Inf, and a metric over an assay's plates is one query by experiment
// time.
func TestPlateQC(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "a1", CreatedAt: t0}) }); err != nil {
			t.Fatal(err)
		}
		m := t0.AddDate(0, 0, 1)
		storePlate(t, s, "p1", t0.AddDate(0, 0, 5), &m)  // measured day 1
		storePlate(t, s, "p2", t0.AddDate(0, 0, 3), nil) // day 3
		storePlate(t, s, "p3", t0.AddDate(0, 0, 2), nil) // day 2, never assessed
		qcs := map[string]*db.PlateQC{
			"p1": {ZPrime: 0.5, SignalWindow: 8, SignalToBackground: 12.5, MaxMean: 1000, MaxCV: 0.05, MinMean: 80, MinCV: 0.1, Pass: true},
			"p2": {ZPrime: -0.25, SignalWindow: math.NaN(), SignalToBackground: math.Inf(1), MaxMean: 900, MaxCV: 0.3, MinMean: 0,
				MinCV: math.NaN(), Pass: false, Reasons: []string{"Z' below 0.4"}},
		}
		for id, qc := range qcs {
			if err := s.Write(ctx, func(w db.Writer) error { return w.SetPlateQC(ctx, id, qc) }); err != nil {
				t.Fatal(err)
			}
		}
		p, err := s.Plate(ctx, "p2")
		if err != nil || p.Figures == nil {
			t.Fatalf("p2: %+v %v", p, err)
		}
		g := p.Figures
		if g.ZPrime != -0.25 || !math.IsNaN(g.SignalWindow) || !math.IsInf(g.SignalToBackground, 1) || g.MinMean != 0 ||
			!math.IsNaN(g.MinCV) || g.Pass || len(g.Reasons) != 1 || g.Reasons[0] != "Z' below 0.4" {
			t.Errorf("p2 figures: %+v", g)
		}
		if p3, _ := s.Plate(ctx, "p3"); p3.Figures != nil {
			t.Errorf("unassessed plate has figures: %+v", p3.Figures)
		}
		sb, err := s.PlateQCSeries(ctx, "a1", "signal_to_background", time.Time{}, time.Time{})
		if err != nil || len(sb) != 2 || sb[0].PlateID != "p1" || sb[0].Value != 12.5 || !sb[0].Pass ||
			sb[1].PlateID != "p2" || !math.IsInf(sb[1].Value, 1) || sb[1].Pass || !sb[1].MeasuredAt.Equal(t0.AddDate(0, 0, 3)) {
			t.Errorf("S/B series: %+v %v", sb, err)
		}
		z, err := s.PlateQCSeries(ctx, "a1", "z_prime", t0.AddDate(0, 0, 2), time.Time{})
		if err != nil || len(z) != 1 || z[0].Value != -0.25 {
			t.Errorf("Z' series from day 2: %+v %v", z, err)
		}
		if _, err := s.PlateQCSeries(ctx, "a1", "qc_pass; DROP TABLE plates", time.Time{}, time.Time{}); !errors.Is(err, db.ErrInvalid) {
			t.Errorf("unknown metric: %v", err)
		}
		if err := s.Write(ctx, func(w db.Writer) error { return w.SetPlateQC(ctx, "nope", qcs["p1"]) }); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("QC of a missing plate: %v", err)
		}
	})
}
