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
		counts := func() []db.JobCount {
			t.Helper()
			c, err := s.JobCounts(ctx)
			if err != nil {
				t.Fatal(err)
			}
			return c
		}
		want := []db.JobCount{{Kind: db.JobPlateFit}, {Kind: db.JobAnalysis}}
		if got := counts(); !slices.Equal(got, want) {
			t.Fatalf("empty queue: %+v, want %+v", got, want)
		}
		// The analysis first, so that two workers take it and one plate.
		err := s.Write(ctx, func(w db.Writer) error {
			if _, err := w.EnqueueAnalysis(ctx, "fit", "a1"); err != nil {
				return err
			}
			for _, p := range []string{"p1", "p2"} {
				if _, err := w.EnqueuePlateFit(ctx, db.PlateJob{PlateID: p}); err != nil {
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
		close(release)
		want = []db.JobCount{{Kind: db.JobPlateFit}, {Kind: db.JobAnalysis}}
		deadline := time.Now().Add(30 * time.Second)
		for got := counts(); !slices.Equal(got, want); got = counts() {
			if time.Now().After(deadline) {
				t.Fatalf("after both plates: %+v, want %+v", got, want)
			}
			time.Sleep(20 * time.Millisecond)
		}
	})
}
