package api

import (
	"context"
	"encoding/json"
	"errors"
	"strings"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// A plate whose job gave up (the queue's last attempt failed: JobFailed)
// is failed with the error in the plate view and for a waiting client, on
// both engines, instead of "running" forever.
func TestPlateOfDiscardedJobFails(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		wells, _ := invented384(5)
		body, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "GIVE-UP", Format: 384, Wells: wells})
		w := ts.do("POST", "/v1/plates", ScopeSubmit, string(body))
		if w.Code != 202 {
			t.Fatalf("%d %s", w.Code, w.Body)
		}
		var acc wire.PlateAccepted
		json.Unmarshal(w.Body.Bytes(), &acc)
		ctx := context.Background()
		if err := store.SetPlateProgress(ctx, acc.PlateID, db.PlateRunning, 3, 16); err != nil {
			t.Fatal(err)
		}
		if err := ts.srv.Service().JobFailed(ctx, db.JobPlateFit, acc.PlateID, errors.New("store curves: deadline exceeded")); err != nil {
			t.Fatal(err)
		}
		var v wire.PlateView
		g := ts.do("GET", "/v1/plates/"+acc.PlateID, ScopeRead, "")
		json.Unmarshal(g.Body.Bytes(), &v)
		if v.Status != db.PlateFailed || !strings.Contains(v.Error, "deadline exceeded") {
			t.Errorf("plate view: %s %q", v.Status, v.Error)
		}
		t0 := time.Now()
		wv, err := ts.srv.Service().WaitPlate(ctx, acc.PlateID, 10*time.Second)
		if err != nil || wv == nil || wv.Status != db.PlateFailed || time.Since(t0) > 2*time.Second {
			t.Errorf("wait: %+v %v after %v", wv, err, time.Since(t0))
		}
		// Reported twice (a retried report), the plate stays failed.
		if err := ts.srv.Service().JobFailed(ctx, db.JobPlateFit, acc.PlateID, errors.New("again")); err != nil {
			t.Error(err)
		}
	})
}
