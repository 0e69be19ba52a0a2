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

// A small plate is taken by the small-job lane's own worker while every
// main worker holds a large plate, and a third large plate keeps waiting
// for a main worker: lanes share no workers.
func TestSmallLane(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		enqueue := func(j db.PlateJob) {
			t.Helper()
			if err := s.Write(ctx, func(w db.Writer) error {
				_, err := w.EnqueuePlateFit(ctx, j)
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
		enqueue(db.PlateJob{PlateID: "big-1", Work: 5e9})
		enqueue(db.PlateJob{PlateID: "big-2", Work: 5e9})
		got := map[string]bool{next("big plates"): true, next("big plates"): true}
		if !got["big-1"] || !got["big-2"] {
			t.Fatalf("started %v, want big-1 and big-2", got)
		}
		enqueue(db.PlateJob{PlateID: "big-3", Work: 5e9})
		enqueue(db.PlateJob{PlateID: "small", Work: 1e6, Small: true})
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

// A plate job's work must be a finite non-negative number.
func TestEnqueuePlateFitRefusesBadWork(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		for _, w := range []float64{math.NaN(), math.Inf(1), -1} {
			err := s.Write(ctx, func(wr db.Writer) error {
				_, err := wr.EnqueuePlateFit(ctx, db.PlateJob{PlateID: "p", Work: w})
				return err
			})
			if !errors.Is(err, db.ErrInvalid) {
				t.Errorf("work %v: %v, want ErrInvalid", w, err)
			}
		}
		c, err := s.JobCounts(ctx)
		if err != nil {
			t.Fatal(err)
		}
		for _, k := range c {
			if k.Queued != 0 {
				t.Errorf("%s: %d queued after refused enqueues", k.Kind, k.Queued)
			}
		}
	})
}
