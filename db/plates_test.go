package db_test

import (
	"context"
	"fmt"
	"sync/atomic"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// A plate, its wells and its job are stored together; a worker takes the
// job; a finished plate keeps the curves of its first successful attempt.
func TestPlateJob(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		v := 12.5
		wells := make([]db.WellRow, 0, 384)
		for i := 0; i < 384; i++ {
			wells = append(wells, db.WellRow{Well: fmt.Sprintf("W%03d", i), Row: i / 24, Col: i % 24, Role: "sample", CompoundID: "c", Conc: 1e-6, Value: &v})
		}
		p := &db.Plate{ID: "p1", CreatedAt: t0, SubmittedBy: "x", Barcode: "LK-1", Format: 384, ConcUnit: "M", Mode: "agonist",
			Settings: []byte(`{}`), InputSHA256: "h", Status: db.PlateQueued, CurvesTotal: 2}
		err := s.Write(ctx, func(w db.Writer) error {
			id, err := w.EnqueuePlateFit(ctx, p.ID, db.JobOpts{})
			if err != nil {
				return err
			}
			p.JobID = id
			return w.InsertPlate(ctx, p, wells)
		})
		if err != nil {
			t.Fatal(err)
		}
		got, err := s.Plate(ctx, "p1")
		if err != nil || got.JobID == 0 || got.Status != db.PlateQueued || got.Barcode != "LK-1" {
			t.Fatalf("plate %+v %v", got, err)
		}
		ws, err := s.Wells(ctx, "p1")
		if err != nil || len(ws) != 384 || *ws[5].Value != 12.5 {
			t.Fatalf("wells: %d %v", len(ws), err)
		}
		var calls atomic.Int32
		err = s.StartWorkers(ctx, func(ctx context.Context, plateID string) error {
			n := calls.Add(1)
			curves := []db.PlateCurve{{Key: "c", CompoundID: "c", Status: "converged", Result: []byte(fmt.Sprintf(`{"attempt":%d}`, n))}}
			if err := s.Write(ctx, func(w db.Writer) error {
				return w.FinishPlate(ctx, plateID, db.PlateDone, []byte(`{"pass":true}`), curves, "")
			}); err != nil {
				return err
			}
			if n == 1 {
				return fmt.Errorf("fail after storing, to force a retry")
			}
			return nil
		}, 2)
		if err != nil {
			t.Fatal(err)
		}
		defer s.StopWorkers(context.Background())
		deadline := time.Now().Add(30 * time.Second)
		for {
			j, err := s.Job(ctx, got.JobID)
			if err != nil {
				t.Fatal(err)
			}
			if j.State == "completed" {
				if j.Attempt != 2 || len(j.Errors) != 1 {
					t.Errorf("job %+v, want completed on the second attempt", j)
				}
				break
			}
			if time.Now().After(deadline) {
				t.Fatalf("job still %s after 30 s", j.State)
			}
			time.Sleep(50 * time.Millisecond)
		}
		cs, _ := s.PlateCurves(ctx, "p1")
		if len(cs) != 1 || string(cs[0].Result) != `{"attempt":1}` && string(cs[0].Result) != `{"attempt": 1}` {
			t.Errorf("curves after a retry: %+v", cs)
		}
		if byJob, err := s.PlateByJob(ctx, got.JobID); err != nil || byJob.ID != "p1" || byJob.Status != db.PlateDone {
			t.Errorf("by job: %+v %v", byJob, err)
		}
		if _, err := s.Job(ctx, 999999); err == nil {
			t.Error("unknown job found")
		}
	})
}
