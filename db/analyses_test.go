package db_test

import (
	"context"
	"errors"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// A queued analysis is stored with its job in one transaction, read back
// as stored, and finished exactly once.
func TestAnalyses(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		at := time.Date(2026, 12, 2, 7, 0, 0, 123000, time.UTC)
		err := s.Write(ctx, func(w db.Writer) error {
			job, err := w.EnqueueAnalysis(ctx, "fit", "an-1", db.JobOpts{})
			if err != nil {
				return err
			}
			return w.InsertAnalysis(ctx, &db.Analysis{ID: "an-1", Kind: "fit", CreatedAt: at, SubmittedBy: "p", JobID: job,
				Request: []byte(`{"model":"hill"}`)})
		})
		if err != nil {
			t.Fatal(err)
		}
		a, err := s.Analysis(ctx, "an-1")
		if err != nil {
			t.Fatal(err)
		}
		if a.Kind != "fit" || !a.CreatedAt.Equal(at) || a.Status != db.AnalysisQueued || a.JobID == 0 || a.FinishedAt != nil ||
			string(a.Request) == "" {
			t.Errorf("stored %+v", a)
		}
		if j, err := s.Job(ctx, a.JobID); err != nil || j.Kind != db.JobAnalysis || j.Target != "an-1" {
			t.Errorf("job %+v, %v", j, err)
		}
		finish := func(status string, reply string) error {
			return s.Write(ctx, func(w db.Writer) error {
				return w.FinishAnalysis(ctx, "an-1", &db.AnalysisResult{Status: status, ReplyStatus: 201, ReplyType: "application/json",
					Reply: []byte(reply), Location: "/v1/fits/f1", At: at.Add(time.Second)})
			})
		}
		if err := finish(db.AnalysisDone, `{"id":"f1"}`); err != nil {
			t.Fatal(err)
		}
		if err := finish(db.AnalysisFailed, `{}`); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("second finish: %v, want ErrNotFound", err)
		}
		a, err = s.Analysis(ctx, "an-1")
		if err != nil || a.Status != db.AnalysisDone || string(a.Reply) != `{"id":"f1"}` || a.ReplyStatus != 201 ||
			a.Location != "/v1/fits/f1" || a.FinishedAt == nil || !a.FinishedAt.Equal(at.Add(time.Second)) {
			t.Errorf("finished %+v, %v", a, err)
		}
		// A request that is not JSON is refused, and nothing is queued.
		err = s.Write(ctx, func(w db.Writer) error {
			return w.InsertAnalysis(ctx, &db.Analysis{ID: "an-2", Kind: "fit", CreatedAt: at, Request: []byte(`{`)})
		})
		if !errors.Is(err, db.ErrInvalid) {
			t.Errorf("invalid request: %v", err)
		}
		if _, err := s.Analysis(ctx, "an-2"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("an-2: %v", err)
		}
	})
}
