package db_test

import (
	"context"
	"database/sql"
	"fmt"
	"path/filepath"
	"slices"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"sluice/db"
	"sluice/db/dbtest"
)

// rawEngines runs fn on both engines with a store and a way to run raw SQL
// beside it (to put River's table in a state only a dead worker leaves).
func rawEngines(t *testing.T, fn func(t *testing.T, s db.Store, exec func(q string, args ...any))) {
	ctx := context.Background()
	t.Run("sqlite", func(t *testing.T) {
		dir := t.TempDir()
		s, err := db.Open(ctx, "", dir)
		if err != nil {
			t.Fatal(err)
		}
		defer s.Close()
		raw, err := sql.Open("sqlite", "file:"+filepath.Join(dir, db.SQLiteFile)+"?_pragma=busy_timeout(10000)")
		if err != nil {
			t.Fatal(err)
		}
		defer raw.Close()
		fn(t, s, func(q string, args ...any) {
			t.Helper()
			if _, err := raw.ExecContext(ctx, q, args...); err != nil {
				t.Fatal(err)
			}
		})
	})
	t.Run("postgres", func(t *testing.T) {
		url := dbtest.PostgresURL(t)
		s, err := db.Open(ctx, url, "")
		if err != nil {
			t.Fatal(err)
		}
		defer s.Close()
		raw, err := pgx.Connect(ctx, url)
		if err != nil {
			t.Fatal(err)
		}
		defer raw.Close(ctx)
		fn(t, s, func(q string, args ...any) {
			t.Helper()
			if _, err := raw.Exec(ctx, q, args...); err != nil {
				t.Fatal(err)
			}
		})
	})
}

// DiscardedWaiting finds the plates and queued analyses whose job River
// discarded (as its rescuer does when a worker died during the last
// attempt) while they still wait, and no others: not a plate whose job
// waits or that is done, not one already marked failed.
func TestDiscardedWaiting(t *testing.T) {
	rawEngines(t, func(t *testing.T, s db.Store, exec func(string, ...any)) {
		ctx := context.Background()
		jobs := map[string]int64{}
		err := s.Write(ctx, func(w db.Writer) error {
			for i, status := range []string{db.PlateRunning, db.PlateQueued, db.PlateRunning, db.PlateDone, db.PlateFailed} {
				id := fmt.Sprintf("p%d", i)
				job, err := w.EnqueuePlateFit(ctx, id, db.JobOpts{})
				if err != nil {
					return err
				}
				jobs[id] = job
				p := &db.Plate{ID: id, CreatedAt: t0, SubmittedBy: "x", Barcode: "LK-" + id, Format: 96, ConcUnit: "M", Mode: "agonist",
					Settings: []byte(`{}`), InputSHA256: "h", Status: status, JobID: job}
				if err := w.InsertPlate(ctx, p, nil); err != nil {
					return err
				}
			}
			for _, id := range []string{"a0", "a1"} {
				job, err := w.EnqueueAnalysis(ctx, "fit", id, db.JobOpts{})
				if err != nil {
					return err
				}
				jobs[id] = job
				if err := w.InsertAnalysis(ctx, &db.Analysis{ID: id, Kind: "fit", CreatedAt: t0, SubmittedBy: "x", JobID: job, Request: []byte(`{}`)}); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		// p2's job still waits; every other one was discarded.
		for id, job := range jobs {
			if id != "p2" {
				exec("UPDATE river_job SET state = 'discarded', attempt = max_attempts, finalized_at = scheduled_at WHERE id = $1", job)
			}
		}
		got, err := s.DiscardedWaiting(ctx, 100)
		if err != nil {
			t.Fatal(err)
		}
		var targets []string
		for _, d := range got {
			targets = append(targets, d.Target)
			if d.JobID != jobs[d.Target] || d.Attempt != 5 || (d.Kind == db.JobPlateFit) != (d.Target[0] == 'p') {
				t.Errorf("%+v: want job %d, attempt 5 and its kind", d, jobs[d.Target])
			}
		}
		slices.Sort(targets)
		if want := []string{"a0", "a1", "p0", "p1"}; !slices.Equal(targets, want) {
			t.Errorf("discarded and waiting: %v, want %v", targets, want)
		}
		if got, err := s.DiscardedWaiting(ctx, 1); err != nil || len(got) != 1 {
			t.Errorf("limit 1: %d, %v", len(got), err)
		}
	})
}

// ExpireIdempotent deletes the records stored before the cut-off, oldest
// first, at most a batch at a time, and keeps the others.
func TestExpireIdempotent(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		err := s.Write(ctx, func(w db.Writer) error {
			for i := range 5 {
				// Keys k0…k4 stored an hour apart, k0 the oldest.
				r := &db.Idempotent{Actor: "a", Key: fmt.Sprintf("k%d", i), RequestSHA256: "h", Status: 201, ContentType: "application/json",
					Body: []byte(`{}`), CreatedAt: t0.Add(time.Duration(i) * time.Hour)}
				if err := w.InsertIdempotent(ctx, r); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		expire := func(before time.Time, limit int) int64 {
			t.Helper()
			var n int64
			if err := s.Write(ctx, func(w db.Writer) error {
				var err error
				n, err = w.ExpireIdempotent(ctx, before, limit)
				return err
			}); err != nil {
				t.Fatal(err)
			}
			return n
		}
		kept := func() (out []string) {
			for i := range 5 {
				if _, err := s.Idempotent(ctx, "a", fmt.Sprintf("k%d", i)); err == nil {
					out = append(out, fmt.Sprintf("k%d", i))
				}
			}
			return out
		}
		cut := t0.Add(3*time.Hour + time.Minute) // k0…k3 are older
		if n := expire(cut, 2); n != 2 {
			t.Errorf("first batch deleted %d, want 2", n)
		}
		if got, want := kept(), []string{"k2", "k3", "k4"}; !slices.Equal(got, want) {
			t.Errorf("after one batch of 2: %v kept, want %v (oldest first)", got, want)
		}
		if n := expire(cut, 2); n != 2 {
			t.Errorf("second batch deleted %d, want 2", n)
		}
		if n := expire(cut, 2); n != 0 {
			t.Errorf("third batch deleted %d, want 0", n)
		}
		if got, want := kept(), []string{"k4"}; !slices.Equal(got, want) {
			t.Errorf("kept %v, want %v", got, want)
		}
	})
}
