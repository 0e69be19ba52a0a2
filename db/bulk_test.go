package db_test

import (
	"context"
	"errors"
	"math"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

func bulkFixture() *db.Bulk {
	at := t0.Add(24 * time.Hour)
	v, est, lo, hi := 42.0, -6.5, -6.7, -6.3
	return &db.Bulk{
		Assays:    []db.Assay{{ID: "a1", Name: "screen", CreatedAt: t0}},
		Compounds: []db.Compound{{ID: "c1", Name: "c1", CreatedAt: t0}, {ID: "c2", Name: "c2", CreatedAt: t0}},
		Plates: []db.BulkPlate{{
			Plate: db.Plate{ID: "p1", CreatedAt: at, SubmittedBy: "seed", AssayID: "a1", Barcode: "B1", Format: 96, MeasuredAt: &at,
				ConcUnit: "M", Mode: "agonist", Settings: []byte(`{}`), InputSHA256: "h", Status: db.PlateDone,
				QC: []byte(`{"pass":true}`), CurvesTotal: 2, CurvesDone: 2,
				Figures: &db.PlateQC{ZPrime: 0.7, SignalWindow: 9, SignalToBackground: math.Inf(1), MaxMean: 100, MaxCV: 0.03,
					MinMean: 0, MinCV: math.NaN(), Pass: true}},
			Wells: []db.WellRow{{Well: "A01", Row: 0, Col: 0, Role: "sample", CompoundID: "c1", Conc: 1e-6, Value: &v},
				{Well: "A02", Row: 0, Col: 1, Role: "sample", CompoundID: "c2", Conc: 1e-6}},
		}},
		Curves: []db.CurveResult{
			{ID: "p1:c1", Kind: db.KindPlateCurve, PlateID: "p1", CurveKey: "c1", AssayID: "a1", CompoundID: "c1", MeasuredAt: at,
				CreatedAt: at, SubmittedBy: "seed", Model: "hill4", Status: "converged", LogEC50: db.Estimate{Value: &est, Lo: &lo, Hi: &hi},
				EngineVersion: "x", InputSHA256: "h", Settings: []byte(`{}`), Result: []byte(`{"status":"converged"}`),
				Params: []db.FitParam{{Name: "log_ec50", Estimate: &est}}},
			{ID: "p1:c2", Kind: db.KindPlateCurve, PlateID: "p1", CurveKey: "c2", AssayID: "a1", CompoundID: "c2", MeasuredAt: at,
				CreatedAt: at, SubmittedBy: "seed", Model: "hill4", Status: "max_iterations", EngineVersion: "x", InputSHA256: "h",
				Settings: []byte(`{}`), Result: []byte(`{}`)},
		},
	}
}

// Load stores catalogue, plates with wells and QC columns, and curves in
// one transaction, readable through the ordinary queries on both engines.
func TestLoad(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		if err := s.Load(ctx, bulkFixture()); err != nil {
			t.Fatal(err)
		}
		p, err := s.Plate(ctx, "p1")
		if err != nil || p.Status != db.PlateDone || p.Figures == nil || p.Figures.ZPrime != 0.7 ||
			!math.IsInf(p.Figures.SignalToBackground, 1) || !math.IsNaN(p.Figures.MinCV) {
			t.Fatalf("plate %+v %v", p, err)
		}
		ws, err := s.Wells(ctx, "p1")
		if err != nil || len(ws) != 2 || *ws[0].Value != 42 || ws[1].Value != nil {
			t.Fatalf("wells %+v %v", ws, err)
		}
		cs, err := s.CompoundCurves(ctx, db.CurveFilter{CompoundID: "c1"})
		if err != nil || len(cs) != 1 || *cs[0].LogEC50.Value != -6.5 || *cs[0].LogEC50.Hi != -6.3 || cs[0].PlateID != "p1" {
			t.Fatalf("curves %+v %v", cs, err)
		}
		qs, err := s.PlateQCSeries(ctx, "a1", "z_prime", time.Time{}, time.Time{})
		if err != nil || len(qs) != 1 || qs[0].Value != 0.7 || !qs[0].Pass {
			t.Fatalf("qc series %+v %v", qs, err)
		}
	})
}

// A load that fails part way (a taken key in its last table) stores
// nothing: no catalogue entry, plate or well of it remains.
func TestLoadAllOrNothing(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		b := bulkFixture()
		b.Curves[1].ID = b.Curves[0].ID
		err := s.Load(ctx, b)
		if !errors.Is(err, db.ErrExists) {
			t.Fatalf("duplicate curve ID: %v, want ErrExists", err)
		}
		if _, err := s.Assay(ctx, "a1"); !errors.Is(err, db.ErrNotFound) {
			t.Fatalf("assay after a failed load: %v", err)
		}
		if _, err := s.Plate(ctx, "p1"); !errors.Is(err, db.ErrNotFound) {
			t.Fatalf("plate after a failed load: %v", err)
		}
		b = bulkFixture()
		b.Plates[0].Plate.Settings = []byte(`{`)
		if err := s.Load(ctx, b); !errors.Is(err, db.ErrInvalid) {
			t.Fatalf("invalid settings: %v, want ErrInvalid", err)
		}
	})
}
