package db

import (
	"context"
	"testing"
	"time"
)

// Each job's attempt runs with its own timeout (JobOpts.Timeout, carried in
// its arguments): clamped to [MinJobTimeout, the ceiling], the ceiling
// when none was given.
func TestJobOwnTimeout(t *testing.T) {
	ctx := context.Background()
	const ceiling = 5 * time.Minute
	s, err := openSQLite(ctx, t.TempDir(), Options{JobTimeout: ceiling})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	want := map[string]time.Duration{
		"scaled":  45 * time.Second,
		"small":   MinJobTimeout, // asked for 1 s
		"huge":    ceiling,       // asked for an hour
		"default": ceiling,       // asked for nothing
	}
	asked := map[string]time.Duration{"scaled": 45 * time.Second, "small": time.Second, "huge": time.Hour}
	if err := s.Write(ctx, func(w Writer) error {
		for target := range want {
			if _, err := w.EnqueueAnalysis(ctx, "fit", target, JobOpts{Timeout: asked[target]}); err != nil {
				return err
			}
		}
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	type seen struct {
		target string
		left   time.Duration
	}
	ch := make(chan seen, len(want))
	if err := s.StartHandlers(ctx, Handlers{Analysis: func(ctx context.Context, analysis, id string) error {
		d, ok := ctx.Deadline()
		if !ok {
			d = time.Now()
		}
		ch <- seen{id, time.Until(d)}
		return nil
	}}, 2); err != nil {
		t.Fatal(err)
	}
	defer s.StopWorkers(ctx)
	for range want {
		select {
		case g := <-ch:
			// The deadline is set when the attempt starts, a moment
			// before the handler reads it: allow 5 s for a loaded machine.
			if w := want[g.target]; g.left > w || g.left < w-5*time.Second {
				t.Errorf("job %s: %v left of its attempt, want %v", g.target, g.left.Round(time.Millisecond), w)
			}
		case <-time.After(30 * time.Second):
			t.Fatal("jobs did not run")
		}
	}
}
