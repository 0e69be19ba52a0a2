package db_test

import (
	"context"
	"errors"
	"sync/atomic"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// waitJob polls a job until done says so, for at most 30 s.
func waitJob(t *testing.T, s db.Store, id int64, done func(*db.Job) bool) *db.Job {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for {
		j, err := s.Job(context.Background(), id)
		if err != nil {
			t.Fatal(err)
		}
		if done(j) {
			return j
		}
		if time.Now().After(deadline) {
			t.Fatalf("job %d still %s after 30 s", id, j.State)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// A queued analysis reaches the analysis handler with its kind and ID, and
// the job says what it is.
func TestAnalysisJob(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		var id int64
		err := s.Write(ctx, func(w db.Writer) error {
			var err error
			id, err = w.EnqueueAnalysis(ctx, "potential", "run-7", db.JobOpts{})
			return err
		})
		if err != nil {
			t.Fatal(err)
		}
		got := make(chan [2]string, 1)
		err = s.StartHandlers(ctx, db.Handlers{Analysis: func(ctx context.Context, analysis, id string) error {
			got <- [2]string{analysis, id}
			return nil
		}}, 1)
		if err != nil {
			t.Fatal(err)
		}
		defer s.StopWorkers(ctx)
		select {
		case g := <-got:
			if g != [2]string{"potential", "run-7"} {
				t.Errorf("handler got %v", g)
			}
		case <-time.After(30 * time.Second):
			t.Fatal("analysis never ran")
		}
		j := waitJob(t, s, id, func(j *db.Job) bool { return j.State == "completed" })
		if j.Kind != db.JobAnalysis || j.Analysis != "potential" || j.Target != "run-7" {
			t.Errorf("job %+v", j)
		}
		if st, _ := db.JobStatus(j, nil); st != db.JobDone {
			t.Errorf("status %s", st)
		}
		err = s.Write(ctx, func(w db.Writer) error { _, err := w.EnqueueAnalysis(ctx, "", "x", db.JobOpts{}); return err })
		if !errors.Is(err, db.ErrInvalid) {
			t.Errorf("analysis without a kind: %v", err)
		}
	})
}

// StopWorkers lets a running job finish within the grace period (soft
// stop), and cancels one that outlasts it, which River hands back.
func TestStopWorkers(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		enqueue := func(target string) int64 {
			var id int64
			if err := s.Write(ctx, func(w db.Writer) error {
				var err error
				id, err = w.EnqueueAnalysis(ctx, "fit", target, db.JobOpts{})
				return err
			}); err != nil {
				t.Fatal(err)
			}
			return id
		}
		started := make(chan string, 2)
		var finished, cancelled atomic.Int32
		handler := func(ctx context.Context, analysis, id string) error {
			started <- id
			d := 300 * time.Millisecond
			if id == "slow" {
				d = time.Minute
			}
			select {
			case <-time.After(d):
				finished.Add(1)
				return nil
			case <-ctx.Done():
				cancelled.Add(1)
				return ctx.Err()
			}
		}

		// Soft: the 300 ms job finishes although the stop comes first.
		quick := enqueue("quick")
		if err := s.StartHandlers(ctx, db.Handlers{Analysis: handler}, 1); err != nil {
			t.Fatal(err)
		}
		<-started
		stopCtx, cancel := context.WithTimeout(ctx, 20*time.Second)
		err := s.StopWorkers(stopCtx)
		cancel()
		if err != nil || finished.Load() != 1 || cancelled.Load() != 0 {
			t.Fatalf("soft stop: %v, finished %d, cancelled %d", err, finished.Load(), cancelled.Load())
		}
		if j, _ := s.Job(ctx, quick); j.State != "completed" {
			t.Errorf("quick job after a soft stop: %s", j.State)
		}

		// Hard: the slow job is cancelled when the 200 ms grace is over.
		slow := enqueue("slow")
		if err := s.StartHandlers(ctx, db.Handlers{Analysis: handler}, 1); err != nil {
			t.Fatal(err)
		}
		<-started
		stopCtx, cancel = context.WithTimeout(ctx, 200*time.Millisecond)
		defer cancel()
		t0 := time.Now()
		err = s.StopWorkers(stopCtx)
		if err == nil || cancelled.Load() != 1 || time.Since(t0) > 15*time.Second {
			t.Fatalf("hard stop: %v after %v, cancelled %d", err, time.Since(t0), cancelled.Load())
		}
		j, _ := s.Job(ctx, slow)
		if j.State == "completed" || j.State == "running" {
			t.Errorf("slow job after a hard stop: %s, want it handed back", j.State)
		}
		// The cancelled attempt does not count (River's JobSnooze): five
		// shutdowns during one long job must not discard it.
		if j.Attempt != 0 || len(j.Errors) != 0 {
			t.Errorf("slow job after a hard stop: attempt %d, errors %q; want the attempt given back", j.Attempt, j.Errors)
		}
	})
}

// JobStatus: River's state and the plate's status, as clients see them.
func TestJobStatus(t *testing.T) {
	for _, c := range []struct {
		state, plate string
		errs         []string
		plateErr     string
		want, err    string
	}{
		{"available", db.PlateQueued, nil, "", db.JobQueued, ""},
		{"available", db.PlateRunning, nil, "", db.JobRunning, ""},
		{"running", db.PlateRunning, nil, "", db.JobRunning, ""},
		{"running", db.PlateDone, nil, "", db.JobDone, ""},
		{"completed", db.PlateDone, nil, "", db.JobDone, ""},
		{"retryable", db.PlateQueued, []string{"first", "second"}, "", db.JobQueued, "second"},
		{"retryable", db.PlateRunning, []string{"first"}, "", db.JobRunning, "first"},
		{"completed", db.PlateFailed, nil, "too few controls", db.JobFailed, "too few controls"},
		{"discarded", db.PlateRunning, []string{"boom"}, "", db.JobFailed, "boom"},
		{"cancelled", "", nil, "", db.JobFailed, ""},
		{"completed", "", nil, "", db.JobDone, ""},
		{"scheduled", "", nil, "", db.JobQueued, ""},
	} {
		var p *db.Plate
		if c.plate != "" {
			p = &db.Plate{Status: c.plate, Error: c.plateErr}
		}
		st, e := db.JobStatus(&db.Job{State: c.state, Errors: c.errs}, p)
		if st != c.want || e != c.err {
			t.Errorf("%s/%s: %s %q, want %s %q", c.state, c.plate, st, e, c.want, c.err)
		}
	}
}
