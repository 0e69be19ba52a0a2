package db_test

import (
	"context"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// A small plate is taken by the small-job lane's own worker while every
// main worker holds a large plate, and a third large plate keeps waiting
// for a main worker: lanes share no workers.
func TestSmallLane(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		enqueue := func(id string, small bool) {
			t.Helper()
			if err := s.Write(ctx, func(w db.Writer) error {
				_, err := w.EnqueuePlateFit(ctx, id, db.JobOpts{Small: small})
				return err
			}); err != nil {
				t.Fatal(err)
			}
		}
		started, release := make(chan string, 4), make(chan struct{})
		err := s.StartWorkers(ctx, func(ctx context.Context, plateID string) error {
			started <- plateID
			if plateID != "small" {
				<-release
			}
			return nil
		}, 2)
		if err != nil {
			t.Fatal(err)
		}
		defer s.StopWorkers(ctx)
		defer close(release)
		next := func(what string) string {
			t.Helper()
			select {
			case id := <-started:
				return id
			case <-time.After(30 * time.Second):
				t.Fatalf("%s: no job started within 30 s", what)
			}
			return ""
		}
		enqueue("big-1", false)
		enqueue("big-2", false)
		got := map[string]bool{next("big plates"): true, next("big plates"): true}
		if !got["big-1"] || !got["big-2"] {
			t.Fatalf("started %v, want big-1 and big-2", got)
		}
		enqueue("big-3", false)
		enqueue("small", true)
		if id := next("small plate"); id != "small" {
			t.Fatalf("started %s while both main workers were busy; want the small plate", id)
		}
		// big-3 must still wait: give the main lane a few fetch intervals
		// (200 ms on PostgreSQL, 50 ms on SQLite) to show it would not.
		select {
		case id := <-started:
			t.Fatalf("%s started while both main workers were busy", id)
		case <-time.After(time.Second):
		}
	})
}
