package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// small96 is a valid 96-well plate: two controls of each kind and one
// compound at eight concentrations.
func small96(barcode string) *PlateSubmission {
	num := func(v float64) *float64 { return &v }
	req := wire.PlateRequest{ConcUnit: "M", Barcode: barcode, Format: 96, Wells: []wire.Well{
		{Well: "A1", Role: "max_control", Value: num(1000)}, {Well: "B1", Role: "max_control", Value: num(990)},
		{Well: "A12", Role: "min_control", Value: num(10)}, {Well: "B12", Role: "min_control", Value: num(12)},
	}}
	for k := 0; k < 8; k++ {
		c := 1e-9 * float64(int(1)<<k)
		req.Wells = append(req.Wells, wire.Well{Well: fmt.Sprintf("C%d", k+2), Role: "sample", CompoundID: "X", Conc: num(c),
			Value: num(10 + 990*c/(c+1e-8))})
	}
	raw, _ := json.Marshal(req)
	return &PlateSubmission{Form: PlateJSON, Plate: req, Raw: raw}
}

// A retried submission under the same key replays the first plate: one
// plate and job, and the replay names the same plate.
func TestSubmitPlateReplays(t *testing.T) {
	store := dbtest.SQLite(t)
	s := newTestService(t, store)
	ctx := context.Background()
	who := Caller{Name: "p", Scope: "submit"}
	idem, err := NewIdem("k1", "POST /v1/plates", nil, small96("B").Raw)
	if err != nil {
		t.Fatal(err)
	}
	r1, a1, err := s.SubmitPlate(ctx, who, idem, small96("B"))
	if err != nil {
		t.Fatal(err)
	}
	r2, a2, err := s.SubmitPlate(ctx, who, idem, small96("B"))
	if err != nil {
		t.Fatal(err)
	}
	if r1.Status != 202 || r1.Replayed || !r2.Replayed || *a1 != *a2 || string(r1.Body) != string(r2.Body) ||
		r2.Location != "/v1/plates/"+a1.PlateID {
		t.Errorf("first %+v %s, retry %+v %s", a1, r1.Body, a2, r2.Body)
	}
	es, _ := store.Audit(ctx, 100)
	if len(es) != 1 {
		t.Errorf("%d audit entries, want one plate", len(es))
	}
}

// WaitPlate ends when the wait is over (nil: not finished), when the
// caller goes away (its context's error), and as soon as the plate is
// done (its view).
func TestWaitPlate(t *testing.T) {
	store := dbtest.SQLite(t)
	s := newTestService(t, store)
	ctx := context.Background()
	_, acc, err := s.SubmitPlate(ctx, Caller{Name: "p"}, nil, small96("W"))
	if err != nil {
		t.Fatal(err)
	}
	start := time.Now()
	v, err := s.WaitPlate(ctx, acc.PlateID, 150*time.Millisecond)
	if v != nil || err != nil || time.Since(start) < 150*time.Millisecond {
		t.Errorf("queued plate: %v, %v after %v", v, err, time.Since(start))
	}
	cctx, cancel := context.WithCancel(ctx)
	time.AfterFunc(50*time.Millisecond, cancel)
	start = time.Now()
	v, err = s.WaitPlate(cctx, acc.PlateID, time.Minute)
	if v != nil || !errors.Is(err, context.Canceled) || time.Since(start) > 50*time.Millisecond+2*waitTick {
		t.Errorf("cancelled wait: %v, %v after %v", v, err, time.Since(start))
	}
	go func() {
		time.Sleep(50 * time.Millisecond)
		if err := s.RunPlateJob(ctx, acc.PlateID); err != nil {
			t.Error(err)
		}
	}()
	v, err = s.WaitPlate(ctx, acc.PlateID, time.Minute)
	if err != nil || v == nil || v.Status != db.PlateDone || len(v.Curves) != 1 {
		t.Fatalf("finished plate: %+v, %v", v, err)
	}
	if _, err := s.WaitPlate(ctx, "no-such-plate", time.Second); !errors.Is(err, db.ErrNotFound) {
		t.Errorf("unknown plate: %v", err)
	}
}
