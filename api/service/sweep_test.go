package service

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// discardingStore is a store whose queue has discarded the given jobs
// without telling the worker (as River's rescuer does when a worker died
// during a job's last attempt); db's TestDiscardedWaiting checks the query
// behind DiscardedWaiting on both engines.
type discardingStore struct {
	db.Store
	discarded []db.Discarded
}

func (d *discardingStore) DiscardedWaiting(ctx context.Context, limit int) ([]db.Discarded, error) {
	var out []db.Discarded
	for _, x := range d.discarded {
		if p, err := d.Store.Plate(ctx, x.Target); err == nil && (p.Status == db.PlateQueued || p.Status == db.PlateRunning) {
			out = append(out, x)
		}
	}
	return out, nil
}

// A plate whose job the queue discarded without the Failed hook is marked
// failed by the next sweep, with a reason that says so; a second sweep
// finds nothing more to do.
func TestSweepFailsPlateOfDiscardedJob(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ds := &discardingStore{Store: store}
		s := newTestService(t, ds)
		ctx := context.Background()
		_, acc, err := s.SubmitPlate(ctx, Caller{Name: "p", Scope: "submit"}, nil, small96("SWEEP-1"))
		if err != nil {
			t.Fatal(err)
		}
		ds.discarded = []db.Discarded{{Kind: db.JobPlateFit, Target: acc.PlateID, JobID: acc.JobID, Attempt: 5}}
		res, err := s.Sweep(ctx)
		if err != nil || res.Failed != 1 {
			t.Fatalf("sweep: %+v, %v; want one plate failed", res, err)
		}
		p, err := store.Plate(ctx, acc.PlateID)
		if err != nil {
			t.Fatal(err)
		}
		if p.Status != db.PlateFailed || !strings.Contains(p.Error, fmt.Sprintf("gave up on job %d after 5 attempts", acc.JobID)) {
			t.Errorf("plate %s: %q, want failed saying the queue gave up", p.Status, p.Error)
		}
		if res, err := s.Sweep(ctx); err != nil || res.Failed != 0 {
			t.Errorf("second sweep: %+v, %v; want nothing to do", res, err)
		}
	})
}

// Idempotency records older than the retention are deleted by the sweep,
// in batches, and younger ones kept: a key is replayed within the
// retention and is a new request after it.
func TestSweepExpiresIdempotencyRecords(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		now := time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC)
		s, err := New(Deps{Store: store, Now: func() time.Time { return now }, IdempotencyRetention: 2 * time.Hour})
		if err != nil {
			t.Fatal(err)
		}
		ctx := context.Background()
		// 2 500 old records (three batches of expireBatch) and one
		// through the service, an hour younger than the retention.
		old := now.Add(-3 * time.Hour)
		err = store.Write(ctx, func(w db.Writer) error {
			for i := range 2*expireBatch + 500 {
				if err := w.InsertIdempotent(ctx, &db.Idempotent{Actor: "p", Key: fmt.Sprintf("old-%d", i), RequestSHA256: "h",
					Status: 201, ContentType: "application/json", Body: []byte(`{}`), CreatedAt: old}); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		who := Caller{Name: "p", Scope: "submit"}
		entry := wire.CatalogueEntry{ID: "A-1", Name: "assay 1"}
		idem, err := NewIdem("young", "POST /v1/assays", nil, []byte(`{"id":"A-1"}`))
		if err != nil {
			t.Fatal(err)
		}
		now = now.Add(-time.Hour) // stored an hour before the sweep
		if _, err := s.CreateAssay(ctx, who, idem, entry); err != nil {
			t.Fatal(err)
		}
		now = now.Add(time.Hour)
		res, err := s.Sweep(ctx)
		if err != nil || res.Expired != 2*expireBatch+500 {
			t.Fatalf("sweep: %+v, %v; want %d expired", res, err, 2*expireBatch+500)
		}
		for _, k := range []string{"old-0", "old-2499"} {
			if _, err := store.Idempotent(ctx, "p", k); !errors.Is(err, db.ErrNotFound) {
				t.Errorf("%s: %v, want deleted", k, err)
			}
		}
		if r, err := s.CreateAssay(ctx, who, idem, entry); err != nil || !r.Replayed {
			t.Errorf("within the retention: %+v, %v; want the reply replayed", r, err)
		}
		// Past the retention the key is gone, and the request is a new one
		// (here refused: the assay exists).
		now = now.Add(90 * time.Minute)
		if res, err := s.Sweep(ctx); err != nil || res.Expired != 1 {
			t.Fatalf("second sweep: %+v, %v; want the young record expired", res, err)
		}
		if r, err := s.CreateAssay(ctx, who, idem, entry); err == nil && r.Replayed {
			t.Errorf("past the retention: replayed %+v", r)
		}
	})
}

// A reply over the stored-reply cap keeps its key without its body: the
// write is not done twice, and the replay is a 409 saying why and where
// the record is.
func TestStoredReplyCap(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		s, err := New(Deps{Store: store, MaxStoredReply: 10})
		if err != nil {
			t.Fatal(err)
		}
		ctx := context.Background()
		who := Caller{Name: "p", Scope: "submit"}
		entry := wire.CatalogueEntry{ID: "A-9", Name: "assay with a long reply"}
		idem, err := NewIdem("big", "POST /v1/assays", nil, []byte(`{"id":"A-9"}`))
		if err != nil {
			t.Fatal(err)
		}
		first, err := s.CreateAssay(ctx, who, idem, entry)
		if err != nil || first.Status != 201 || len(first.Body) <= 10 {
			t.Fatalf("first: %+v, %v", first, err)
		}
		rec, err := store.Idempotent(ctx, "p", "big")
		if err != nil || len(rec.Body) != 0 || rec.OmittedBytes != int64(len(first.Body)) || rec.Status != 201 {
			t.Fatalf("record %+v, %v; want no body, its size, status 201", rec, err)
		}
		_, err = s.CreateAssay(ctx, who, idem, entry)
		var e *Error
		if !errors.As(err, &e) || e.Kind != ErrConflict || !strings.Contains(e.Detail, "over the 10-byte limit") ||
			!strings.Contains(e.Detail, first.Location) {
			t.Errorf("replay: %v; want a conflict naming the limit and %s", err, first.Location)
		}
		if es, _ := store.Audit(ctx, 100); len(es) != 1 {
			t.Errorf("%d audit entries, want the assay stored once", len(es))
		}
	})
}
