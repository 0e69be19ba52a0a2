package db_test

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"reflect"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// The contract suite: every test runs against both engines.

var t0 = time.Date(2026, 11, 3, 9, 30, 0, 123456000, time.UTC)

func f(v float64) *float64 { return &v }

func TestCatalogue(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		a := &db.Assay{ID: "a1", Name: "Potential dye, LGX-7", Target: "LGX-7 α2β3", Readout: "membrane potential dye", Units: "% max", CreatedAt: t0, CreatedBy: "admin"}
		err := s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertAssay(ctx, a); err != nil {
				return err
			}
			return w.InsertCompound(ctx, &db.Compound{ID: "c1", Name: "demo-ag-1", CreatedAt: t0})
		})
		if err != nil {
			t.Fatal(err)
		}
		got, err := s.Assay(ctx, "a1")
		if err != nil || *got != *a {
			t.Fatalf("Assay = %+v, %v; want %+v", got, err, a)
		}
		if _, err := s.Assay(ctx, "nope"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("missing assay: %v, want ErrNotFound", err)
		}
		err = s.Write(ctx, func(w db.Writer) error { return w.InsertAssay(ctx, a) })
		if !errors.Is(err, db.ErrExists) {
			t.Errorf("duplicate assay: %v, want ErrExists", err)
		}
		cs, err := s.Compounds(ctx)
		if err != nil || len(cs) != 1 || cs[0].Name != "demo-ag-1" || !cs[0].CreatedAt.Equal(t0) {
			t.Errorf("Compounds = %+v, %v", cs, err)
		}
	})
}

// A failed write leaves nothing behind: whether the caller gives up or the
// database refuses a later statement.
func TestWriteIsAtomic(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		err := s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertAssay(ctx, &db.Assay{ID: "a0", Name: "x", CreatedAt: t0}); err != nil {
				return err
			}
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c0", Name: "x", CreatedAt: t0}); err != nil {
				return err
			}
			return w.InsertAssay(ctx, &db.Assay{ID: "a0", Name: "again", CreatedAt: t0})
		})
		if !errors.Is(err, db.ErrExists) {
			t.Fatalf("duplicate within a write: %v, want ErrExists", err)
		}
		if _, err := s.Assay(ctx, "a0"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("first insert of a failed write survived: %v", err)
		}
		if _, err := s.Compound(ctx, "c0"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("second insert of a failed write survived: %v", err)
		}
		boom := errors.New("boom")
		err = s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "x", CreatedAt: t0}); err != nil {
				return err
			}
			return boom
		})
		if !errors.Is(err, boom) {
			t.Fatalf("err = %v", err)
		}
		if _, err := s.Assay(ctx, "a1"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("assay survived a rolled-back write: %v", err)
		}
	})
}

func run(id string, created time.Time, assay, compound string) *db.FitRun {
	return &db.FitRun{ID: id, CreatedAt: created, SubmittedBy: "pipeline-3", AssayID: assay, CompoundID: compound,
		Model: "hill", Status: "converged", LogEC50: f(-6.5), EngineVersion: "0.1.0", InputSHA256: "abc",
		Settings: []byte(`{"model":"hill"}`), Input: []byte(`{"points":[]}`), Result: []byte(`{"status":"converged"}`),
		Params: []db.FitParam{
			{Name: "bottom", Estimate: f(1), SE: f(0.5), WaldLo: f(0), WaldHi: f(2)},
			{Name: "hill", Estimate: f(10), AtBound: true},
			{Name: "top", Estimate: f(100), Fixed: true},
		}}
}

func TestFitRuns(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		err := s.Write(ctx, func(w db.Writer) error {
			for _, id := range []string{"a1", "a2"} {
				if err := w.InsertAssay(ctx, &db.Assay{ID: id, Name: id, CreatedAt: t0}); err != nil {
					return err
				}
			}
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c1", Name: "c1", CreatedAt: t0}); err != nil {
				return err
			}
			for i := 0; i < 7; i++ {
				assay := "a1"
				if i%2 == 1 {
					assay = "a2"
				}
				if err := w.InsertFitRun(ctx, run(fmt.Sprintf("run-%02d", i), t0.Add(time.Duration(i)*time.Hour), assay, "c1")); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		got, err := s.FitRun(ctx, "run-03")
		if err != nil {
			t.Fatal(err)
		}
		want := run("run-03", t0.Add(3*time.Hour), "a2", "c1")
		if got.AssayID != "a2" || got.CompoundID != "c1" || got.RefitOf != "" || !got.CreatedAt.Equal(want.CreatedAt) ||
			*got.LogEC50 != -6.5 || string(got.Settings) != `{"model": "hill"}` && string(got.Settings) != `{"model":"hill"}` {
			t.Errorf("FitRun = %+v", got)
		}
		if len(got.Params) != 3 || got.Params[1].Name != "hill" || !got.Params[1].AtBound || got.Params[1].SE != nil ||
			!got.Params[2].Fixed || *got.Params[0].WaldHi != 2 {
			t.Errorf("params = %+v", got.Params)
		}
		// Newest first, filtered, paged by cursor.
		var ids []string
		cursor := ""
		for page := 0; page < 5; page++ {
			runs, next, err := s.FitRuns(ctx, db.FitFilter{AssayID: "a1", Limit: 2, Cursor: cursor})
			if err != nil {
				t.Fatal(err)
			}
			for _, r := range runs {
				ids = append(ids, r.ID)
			}
			if next == "" {
				break
			}
			cursor = next
		}
		if fmt.Sprint(ids) != "[run-06 run-04 run-02 run-00]" {
			t.Errorf("paged a1 runs: %v", ids)
		}
		runs, _, err := s.FitRuns(ctx, db.FitFilter{From: t0.Add(2 * time.Hour), To: t0.Add(5 * time.Hour)})
		if err != nil || len(runs) != 3 || runs[0].ID != "run-04" || runs[2].ID != "run-02" {
			t.Errorf("time window: %d runs %v", len(runs), err)
		}
		// A run that names an unknown assay is refused, and nothing of it stays.
		err = s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, run("bad", t0, "nope", "")) })
		if !errors.Is(err, db.ErrReference) {
			t.Errorf("unknown assay: %v, want ErrReference", err)
		}
		if _, err := s.FitRun(ctx, "bad"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("bad run stored: %v", err)
		}
		// A re-fit points at its original.
		re := run("run-10", t0.Add(10*time.Hour), "", "")
		re.RefitOf = "run-03"
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, re) }); err != nil {
			t.Fatal(err)
		}
		if got, _ := s.FitRun(ctx, "run-10"); got.RefitOf != "run-03" {
			t.Errorf("refit_of = %q", got.RefitOf)
		}
	})
}

func TestTokensAuditIdempotency(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		err := s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertToken(ctx, &db.Token{ID: "t1", Name: "pipeline-3", Scope: "submit", Hash: "h1", CreatedAt: t0}); err != nil {
				return err
			}
			if err := w.UpsertToken(ctx, &db.Token{ID: "t2", Name: "env-admin", Scope: "admin", Hash: "h2", CreatedAt: t0}); err != nil {
				return err
			}
			// Re-seeding the admin token replaces its hash.
			if err := w.UpsertToken(ctx, &db.Token{ID: "t3", Name: "env-admin", Scope: "admin", Hash: "h3", CreatedAt: t0}); err != nil {
				return err
			}
			return w.InsertAudit(ctx, &db.AuditEntry{At: t0, Actor: "pipeline-3", Action: "fit.create", Target: "run-1"})
		})
		if err != nil {
			t.Fatal(err)
		}
		if tok, err := s.TokenByHash(ctx, "h1"); err != nil || tok.Name != "pipeline-3" || tok.Scope != "submit" {
			t.Errorf("token h1: %+v %v", tok, err)
		}
		if _, err := s.TokenByHash(ctx, "h2"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("replaced hash still valid: %v", err)
		}
		if tok, err := s.TokenByHash(ctx, "h3"); err != nil || tok.Scope != "admin" {
			t.Errorf("token h3: %+v %v", tok, err)
		}
		err = s.Write(ctx, func(w db.Writer) error {
			return w.InsertToken(ctx, &db.Token{ID: "t4", Name: "x", Scope: "root", Hash: "h4", CreatedAt: t0})
		})
		if err == nil {
			t.Error("scope root accepted")
		}
		entries, err := s.Audit(ctx, 10)
		if err != nil || len(entries) != 1 || entries[0].Action != "fit.create" {
			t.Errorf("audit: %+v %v", entries, err)
		}
		rec := &db.Idempotent{Actor: "pipeline-3", Key: "k1", RequestSHA256: "r", Status: 201, ContentType: "application/json", Body: []byte(`{"id":"x"}`), CreatedAt: t0}
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertIdempotent(ctx, rec) }); err != nil {
			t.Fatal(err)
		}
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertIdempotent(ctx, rec) }); !errors.Is(err, db.ErrExists) {
			t.Errorf("second insert of a key: %v, want ErrExists", err)
		}
		got, err := s.Idempotent(ctx, "pipeline-3", "k1")
		if err != nil || got.Status != 201 || string(got.Body) != `{"id":"x"}` {
			t.Errorf("idempotent: %+v %v", got, err)
		}
		if _, err := s.Idempotent(ctx, "someone-else", "k1"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("keys are per actor: %v", err)
		}
		if err := s.Ping(ctx); err != nil {
			t.Error(err)
		}
		if st := s.Stats(); st.Max <= 0 {
			t.Errorf("stats %+v", st)
		}
	})
}

// Reopening applies no migration twice and keeps the data.
func TestReopenSQLite(t *testing.T) {
	dir := t.TempDir()
	ctx := context.Background()
	s, err := db.Open(ctx, "", dir)
	if err != nil {
		t.Fatal(err)
	}
	s.Write(ctx, func(w db.Writer) error { return w.InsertAssay(ctx, &db.Assay{ID: "a", Name: "a", CreatedAt: t0}) })
	s.Close()
	s, err = db.Open(ctx, "", dir)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if _, err := s.Assay(ctx, "a"); err != nil {
		t.Error(err)
	}
}

// jsonEqual compares JSON documents by value (PostgreSQL's jsonb
// normalises spacing and key order).
func jsonEqual(got []byte, want string) bool {
	var a, b any
	if json.Unmarshal(got, &a) != nil || json.Unmarshal([]byte(want), &b) != nil {
		return false
	}
	return reflect.DeepEqual(a, b)
}
