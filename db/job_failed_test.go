package db

import (
	"context"
	"errors"
	"testing"
	"time"
)

// A job whose last attempt fails is reported to Handlers.Failed (with its
// kind, target and error) before River discards it; one that fails an
// earlier attempt is not, and is retried.
func TestLastAttemptReported(t *testing.T) {
	ctx := context.Background()
	s, err := openSQLite(ctx, t.TempDir(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	enqueue := func(target string) int64 {
		var id int64
		if err := s.Write(ctx, func(w Writer) error {
			id, err = w.EnqueueAnalysis(ctx, "fit", target, JobOpts{})
			return err
		}); err != nil {
			t.Fatal(err)
		}
		return id
	}
	last, first := enqueue("last"), enqueue("first")
	// The job "last" has used all but one of its attempts.
	if _, err := s.e.exec(ctx, "UPDATE river_job SET attempt = max_attempts - 1 WHERE id = $1", last); err != nil {
		t.Fatal(err)
	}
	type report struct{ kind, target, err string }
	reports := make(chan report, 4)
	ran := make(chan string, 4)
	err = s.StartHandlers(ctx, Handlers{
		Analysis: func(ctx context.Context, analysis, id string) error {
			ran <- id
			if id == "last" {
				panic("boom") // a panic is a failure like any other
			}
			return errors.New("boom")
		},
		Failed: func(ctx context.Context, kind, target string, err error) error {
			reports <- report{kind, target, err.Error()}
			return nil
		},
	}, 2)
	if err != nil {
		t.Fatal(err)
	}
	defer s.StopWorkers(ctx)
	for range 2 {
		select {
		case <-ran:
		case <-time.After(30 * time.Second):
			t.Fatal("jobs did not run")
		}
	}
	select {
	case r := <-reports:
		if r.kind != JobAnalysis || r.target != "last" || r.err == "" {
			t.Errorf("report %+v", r)
		}
	case <-time.After(30 * time.Second):
		t.Fatal("the last attempt's failure was not reported")
	}
	deadline := time.Now().Add(30 * time.Second)
	for {
		j, err := s.Job(ctx, last)
		if err != nil {
			t.Fatal(err)
		}
		if j.State == "discarded" {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("job still %s", j.State)
		}
		time.Sleep(20 * time.Millisecond)
	}
	if j, _ := s.Job(ctx, first); j.State != "retryable" && j.State != "available" && j.State != "running" {
		t.Errorf("first attempt's job: %s, want it retried", j.State)
	}
	counts, err := s.JobCounts(ctx)
	if err != nil {
		t.Fatal(err)
	}
	if a := counts[1]; a.Kind != JobAnalysis || a.Discarded != 1 {
		t.Errorf("job counts %+v, want one discarded analysis (sluice_jobs_discarded)", counts)
	}
	select {
	case r := <-reports:
		t.Errorf("an earlier attempt was reported: %+v", r)
	default:
	}
}
