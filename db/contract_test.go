package db_test

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"sync"
	"testing"

	"sluice/db"
	"sluice/db/dbtest"
)

// An ErrExists from one call reaches the closure as it happens; the
// closure may go on (and commit the rest) or give up (and keep nothing).
func TestWriteErrorVisibility(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		if err := s.Write(ctx, func(w db.Writer) error {
			return w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "first", CreatedAt: t0})
		}); err != nil {
			t.Fatal(err)
		}
		// Go on after ErrExists.
		calls := 0
		err := s.Write(ctx, func(w db.Writer) error {
			calls++
			err := w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "second", CreatedAt: t0})
			if !errors.Is(err, db.ErrExists) {
				t.Errorf("duplicate inside the write: %v, want ErrExists", err)
			}
			return w.InsertCompound(ctx, &db.Compound{ID: "c1", Name: "c1", CreatedAt: t0})
		})
		if err != nil || calls != 1 {
			t.Fatalf("write that went on: %v after %d calls of the closure", err, calls)
		}
		if a, _ := s.Assay(ctx, "a1"); a == nil || a.Name != "first" {
			t.Errorf("assay a1 = %+v, want the first", a)
		}
		if _, err := s.Compound(ctx, "c1"); err != nil {
			t.Errorf("compound inserted after the ErrExists: %v", err)
		}
		// Give up after ErrExists.
		err = s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c2", Name: "c2", CreatedAt: t0}); err != nil {
				return err
			}
			return w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "third", CreatedAt: t0})
		})
		if !errors.Is(err, db.ErrExists) {
			t.Fatalf("write that gave up: %v", err)
		}
		if _, err := s.Compound(ctx, "c2"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("compound of an abandoned write: %v", err)
		}
		// Any other error aborts the write on both engines, even when the
		// closure swallows it.
		err = s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c3", Name: "c3", CreatedAt: t0}); err != nil {
				return err
			}
			ref := w.InsertReview(ctx, &db.Review{ID: "v1", CurveID: "nope", Decision: db.ReviewRejected, Reason: "x", Actor: "a", At: t0})
			if !errors.Is(ref, db.ErrReference) {
				t.Errorf("unknown curve: %v", ref)
			}
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c4", Name: "c4", CreatedAt: t0}); !errors.Is(err, db.ErrReference) {
				t.Errorf("call after an aborting error: %v, want that error again", err)
			}
			return nil
		})
		if !errors.Is(err, db.ErrReference) {
			t.Errorf("swallowed error: Write = %v, want ErrReference", err)
		}
		for _, id := range []string{"c3", "c4"} {
			if _, err := s.Compound(ctx, id); !errors.Is(err, db.ErrNotFound) {
				t.Errorf("compound %s of an aborted write: %v", id, err)
			}
		}
	})
}

// A held-back call (InsertFitRun, InsertAudit, InsertIdempotent) reports
// its error from the next call or from Write, as its own operation's
// error, and the write keeps nothing: on PostgreSQL it travels with the
// next round trip, on SQLite it runs at once.
func TestHeldBackErrors(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		// The error comes from the next call.
		err := s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c1", Name: "c1", CreatedAt: t0}); err != nil {
				return err
			}
			first := w.InsertFitRun(ctx, run("r1", t0, "nope", ""))
			next := w.InsertCompound(ctx, &db.Compound{ID: "c2", Name: "c2", CreatedAt: t0})
			if !errors.Is(errors.Join(first, next), db.ErrReference) {
				t.Errorf("held-back fit of an unknown assay: %v, then %v; want ErrReference from one of them", first, next)
			}
			if !strings.Contains(next.Error(), `InsertFitRun("r1")`) {
				t.Errorf("the next call's error %q does not name the held-back call", next)
			}
			return nil
		})
		if !errors.Is(err, db.ErrReference) || !strings.Contains(err.Error(), `InsertFitRun("r1")`) {
			t.Errorf("Write = %v, want the fit's ErrReference", err)
		}
		// The error comes from Write: nothing follows the held-back call.
		err = s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c3", Name: "c3", CreatedAt: t0}); err != nil {
				return err
			}
			return w.InsertAudit(ctx, &db.AuditEntry{At: t0, Actor: "a", Action: "x", Target: "t", Detail: []byte(`{"a":`)})
		})
		if !errors.Is(err, db.ErrInvalid) || !strings.Contains(err.Error(), "InsertAudit") {
			t.Errorf("Write with an invalid audit entry = %v, want InsertAudit's ErrInvalid", err)
		}
		rec := &db.Idempotent{Actor: "x", Key: "k", RequestSHA256: "h", Status: 201, ContentType: "application/json", Body: []byte("{}"), CreatedAt: t0}
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertIdempotent(ctx, rec) }); err != nil {
			t.Fatal(err)
		}
		err = s.Write(ctx, func(w db.Writer) error {
			if err := w.InsertCompound(ctx, &db.Compound{ID: "c5", Name: "c5", CreatedAt: t0}); err != nil {
				return err
			}
			return w.InsertIdempotent(ctx, rec)
		})
		if !errors.Is(err, db.ErrExists) || !strings.Contains(err.Error(), `InsertIdempotent("k")`) {
			t.Errorf("Write with a taken key = %v, want InsertIdempotent's ErrExists", err)
		}
		for _, id := range []string{"c1", "c2", "c3", "c5"} {
			if _, err := s.Compound(ctx, id); !errors.Is(err, db.ErrNotFound) {
				t.Errorf("compound %s of a failed write: %v", id, err)
			}
		}
		if _, err := s.FitRun(ctx, "r1"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("fit r1 of a failed write: %v", err)
		}
		if n, err := s.Audit(ctx, 10); err != nil || len(n) != 0 {
			t.Errorf("audit entries of failed writes: %v, %v", n, err)
		}
	})
}

// Two writers racing for one key: exactly one wins, the other sees
// ErrExists, on both engines.
func TestWriteConcurrentKey(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		var wg sync.WaitGroup
		errs := make([]error, 4)
		for i := range errs {
			wg.Add(1)
			go func() {
				defer wg.Done()
				errs[i] = s.Write(ctx, func(w db.Writer) error {
					return w.InsertIdempotent(ctx, &db.Idempotent{Actor: "x", Key: "k", RequestSHA256: "h", Status: 201,
						ContentType: "application/json", Body: []byte("{}"), CreatedAt: t0})
				})
			}()
		}
		wg.Wait()
		won := 0
		for _, err := range errs {
			switch {
			case err == nil:
				won++
			case !errors.Is(err, db.ErrExists):
				t.Errorf("loser: %v, want ErrExists", err)
			}
		}
		if won != 1 {
			t.Errorf("%d writers won", won)
		}
	})
}

// JSON documents are checked in db, the same on both engines: what is not
// JSON (or what PostgreSQL's jsonb cannot hold) is ErrInvalid and stored
// nowhere.
func TestInvalidJSONRefused(t *testing.T) {
	bad := []string{`{"a":`, "{\"a\":\"\x01\"}", `{"a":"\u0000"}`, "{\"a\":\"\xff\"}", `nope`}
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		for _, doc := range bad {
			r := run("r1", t0, "", "")
			r.Settings = []byte(doc)
			err := s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, r) })
			if !errors.Is(err, db.ErrInvalid) || err.Error() != `db: InsertFitRun("r1"): settings: invalid value` {
				t.Errorf("settings %q: %v", doc, err)
			}
			err = s.Write(ctx, func(w db.Writer) error {
				return w.InsertAudit(ctx, &db.AuditEntry{At: t0, Actor: "x", Action: "plate.create", Target: "p1", Detail: []byte(doc)})
			})
			if !errors.Is(err, db.ErrInvalid) {
				t.Errorf("audit detail %q: %v", doc, err)
			}
		}
		if _, err := s.FitRun(ctx, "r1"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("a run with bad JSON was stored: %v", err)
		}
		if es, _ := s.Audit(ctx, 10); len(es) != 0 {
			t.Errorf("audit entries with bad JSON stored: %d", len(es))
		}
		// An escaped backslash before u0000 is text, not a NUL: accepted.
		r := run("r2", t0, "", "")
		r.Labels = []byte(`{"path":"\\u0000"}`)
		if err := s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, r) }); err != nil {
			t.Errorf("escaped backslash: %v", err)
		}
		// Text either engine would refuse or change is refused by both.
		for _, name := range []string{"nul\x00byte", "bad\xffutf8"} {
			err := s.Write(ctx, func(w db.Writer) error {
				return w.InsertAssay(ctx, &db.Assay{ID: "a-" + name[:3], Name: name, CreatedAt: t0})
			})
			if !errors.Is(err, db.ErrInvalid) {
				t.Errorf("name %q: %v, want ErrInvalid", name, err)
			}
		}
	})
}

// Error texts name the operation and key, never the driver or a
// constraint, and are the same on both engines (compared with literals).
func TestErrorTexts(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		if err := s.Write(ctx, func(w db.Writer) error {
			return w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "a1", CreatedAt: t0})
		}); err != nil {
			t.Fatal(err)
		}
		checks := []struct {
			want string
			kind error
			err  func() error
		}{
			{`db: Assay("nope"): not found`, db.ErrNotFound, func() error { _, err := s.Assay(ctx, "nope"); return err }},
			{`db: FitRun("nope"): not found`, db.ErrNotFound, func() error { _, err := s.FitRun(ctx, "nope"); return err }},
			{`db: Plate("nope"): not found`, db.ErrNotFound, func() error { _, err := s.Plate(ctx, "nope"); return err }},
			{`db: Job("424242"): not found`, db.ErrNotFound, func() error { _, err := s.Job(ctx, 424242); return err }},
			{`db: InsertAssay("a1"): already exists`, db.ErrExists, func() error {
				return s.Write(ctx, func(w db.Writer) error { return w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "x", CreatedAt: t0}) })
			}},
			{`db: InsertFitRun("r1"): referenced record does not exist`, db.ErrReference, func() error {
				return s.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, run("r1", t0, "nope", "")) })
			}},
			{`db: InsertToken("x"): invalid value`, db.ErrInvalid, func() error {
				return s.Write(ctx, func(w db.Writer) error {
					return w.InsertToken(ctx, &db.Token{ID: "t", Name: "x", Scope: "root", Hash: "h", CreatedAt: t0})
				})
			}},
			{`db: RevokeToken("nobody"): not found`, db.ErrNotFound, func() error {
				return s.Write(ctx, func(w db.Writer) error { return w.RevokeToken(ctx, "nobody", t0) })
			}},
		}
		for _, c := range checks {
			err := c.err()
			if !errors.Is(err, c.kind) || err.Error() != c.want {
				t.Errorf("got %v, want %s", err, c.want)
			}
			var de *db.Error
			if !errors.As(err, &de) {
				t.Errorf("%v is not a *db.Error", err)
			}
			for _, leak := range []string{"sql", "constraint", "pkey", "duplicate", "violates", "SQLITE"} {
				if strings.Contains(strings.ToLower(err.Error()), strings.ToLower(leak)) {
					t.Errorf("%q shows %q", err, leak)
				}
			}
		}
	})
}

// The plate job's pattern: a retried job stores its Schild runs again in
// the write that finishes the plate; the ones already stored answer
// ErrExists, the write goes on and commits, and the first runs stay.
func TestSchildRunKeepsFirst(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		setup := func() error {
			return s.Write(ctx, func(w db.Writer) error {
				if err := w.InsertAssay(ctx, &db.Assay{ID: "a1", Name: "a1", CreatedAt: t0}); err != nil {
					return err
				}
				return w.InsertPlate(ctx, &db.Plate{ID: "p1", CreatedAt: t0, SubmittedBy: "robot", AssayID: "a1", Barcode: "LK-1",
					Format: 96, ConcUnit: "M", Mode: "antagonist", Settings: []byte(`{}`), InputSHA256: "h", Status: db.PlateRunning}, nil)
			})
		}
		if err := setup(); err != nil {
			t.Fatal(err)
		}
		finish := func(attempt int) error {
			return s.Write(ctx, func(w db.Writer) error {
				for _, pair := range []string{"A:X", "A:Y"} {
					r := &db.SchildRun{ID: "p1:" + pair, CreatedAt: t0, SubmittedBy: "robot", PlateID: "p1", AgonistID: "A",
						AntagonistID: pair[2:], EngineVersion: "0", InputSHA256: "h", Input: []byte(`{}`),
						Result: []byte(fmt.Sprintf(`{"attempt":%d}`, attempt))}
					if err := w.InsertSchildRun(ctx, r); err != nil && !errors.Is(err, db.ErrExists) {
						return err
					}
				}
				return w.FinishPlate(ctx, "p1", db.PlateDone, []byte(`{"pass":true}`), nil, "")
			})
		}
		for attempt := 1; attempt <= 2; attempt++ {
			if err := finish(attempt); err != nil {
				t.Fatalf("attempt %d: %v", attempt, err)
			}
		}
		runs, err := s.PlateSchildRuns(ctx, "p1")
		if err != nil || len(runs) != 2 {
			t.Fatalf("runs: %+v %v", runs, err)
		}
		for _, r := range runs {
			if !jsonEqual(r.Result, `{"attempt":1}`) {
				t.Errorf("%s: %s, want the first attempt's", r.ID, r.Result)
			}
		}
		if p, _ := s.Plate(ctx, "p1"); p.Status != db.PlateDone {
			t.Errorf("plate %s", p.Status)
		}
	})
}
