package db_test

import (
	"context"
	"slices"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// JobCounts reports zero for both kinds on an empty queue, counts what
// waits, and moves a job from queued to running when a worker takes it and
// out of both when it is done.
func TestJobCounts(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		// oldest holds each kind's OldestRunning, compared apart.
		var oldest [2]time.Time
		counts := func() []db.JobCount {
			t.Helper()
			c, err := s.JobCounts(ctx)
			if err != nil {
				t.Fatal(err)
			}
			for i := range c {
				oldest[i], c[i].OldestRunning = c[i].OldestRunning, time.Time{}
			}
			return c
		}
		want := []db.JobCount{{Kind: db.JobPlateFit}, {Kind: db.JobAnalysis}}
		if got := counts(); !slices.Equal(got, want) {
			t.Fatalf("empty queue: %+v, want %+v", got, want)
		}
		// The analysis first, so that two workers take it and one plate.
		err := s.Write(ctx, func(w db.Writer) error {
			if _, err := w.EnqueueAnalysis(ctx, "fit", "a1", db.JobOpts{}); err != nil {
				return err
			}
			for _, p := range []string{"p1", "p2"} {
				if _, err := w.EnqueuePlateFit(ctx, p, db.JobOpts{}); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		want = []db.JobCount{{Kind: db.JobPlateFit, Queued: 2}, {Kind: db.JobAnalysis, Queued: 1}}
		if got := counts(); !slices.Equal(got, want) {
			t.Fatalf("three queued: %+v, want %+v", got, want)
		}
		// Two workers whose jobs hold until released.
		started, release := make(chan string, 3), make(chan struct{})
		err = s.StartHandlers(ctx, db.Handlers{
			Plate: func(ctx context.Context, plateID string) error {
				started <- plateID
				<-release
				return nil
			},
			Analysis: func(ctx context.Context, analysis, id string) error {
				started <- id
				<-release
				return nil
			},
		}, 2)
		if err != nil {
			t.Fatal(err)
		}
		defer s.StopWorkers(ctx)
		// Both engines stamp an attempt's start; allow 2 s between the
		// database's clock and the test's.
		before := time.Now().Add(-2 * time.Second)
		for range 2 {
			select {
			case <-started:
			case <-time.After(30 * time.Second):
				t.Fatal("two jobs did not start within 30 s")
			}
		}
		want = []db.JobCount{{Kind: db.JobPlateFit, Queued: 1, Running: 1}, {Kind: db.JobAnalysis, Running: 1}}
		if got := counts(); !slices.Equal(got, want) {
			t.Errorf("two running: %+v, want %+v", got, want)
		}
		after := time.Now().Add(2 * time.Second)
		for i, o := range oldest {
			if o.Before(before) || o.After(after) {
				t.Errorf("kind %s: oldest running attempt began %v, want within [%v, %v]", want[i].Kind, o, before, after)
			}
		}
		close(release)
		want = []db.JobCount{{Kind: db.JobPlateFit}, {Kind: db.JobAnalysis}}
		deadline := time.Now().Add(30 * time.Second)
		for got := counts(); !slices.Equal(got, want); got = counts() {
			if time.Now().After(deadline) {
				t.Fatalf("after both plates: %+v, want %+v", got, want)
			}
			time.Sleep(20 * time.Millisecond)
		}
		if !oldest[0].IsZero() || !oldest[1].IsZero() {
			t.Errorf("nothing runs, yet the oldest running attempts began %v", oldest)
		}
	})
}
