package api

import (
	"context"
	"encoding/json"
	"net/http/httptest"
	"os"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// FuzzPlateJSON: any JSON body sent to POST /v1/plates gives a stored
// plate (202) or a 4xx problem with fields, never a panic or a 5xx, on
// PostgreSQL when SLUICE_TEST_DATABASE_URL is set (SQLite otherwise); a
// 4xx stores nothing (no audit entry), a 202 stores the plate. Decoding
// round-trips: an accepted plate's request, encoded and decoded again, is
// accepted as the same plate (as many wells and curves).
func FuzzPlateJSON(f *testing.F) {
	wells, _ := invented384(9)
	good, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "F", Format: 384, Wells: wells[:80]})
	f.Add(string(good))
	ctrl, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "F\x00\x1b\"\\", Format: 384, Wells: wells[:80]})
	f.Add(string(ctrl))
	f.Add(`{"barcode":"x","format":96,"wells":[{"well":"A1","role":"max_control","value":1}]}`)
	f.Add(`{"format":1536,"wells":[{"well":"AF48","role":"sample","compound_id":"c","conc":-1,"value":2}]}`)
	var store db.Store
	if os.Getenv(dbtest.URLVar) != "" {
		store = dbtest.Postgres(f)
	} else {
		store = dbtest.SQLite(f)
	}
	ts := newTestServer(f, store)
	ctx := context.Background()
	audits := func(t *testing.T) int {
		es, err := store.Audit(ctx, 1<<20)
		if err != nil {
			t.Fatal(err)
		}
		return len(es)
	}
	// post sends a body and checks the oracle; it returns the stored
	// plate's ID when the plate was accepted.
	post := func(t *testing.T, in string) string {
		before := audits(t)
		r := httptest.NewRequest("POST", "/v1/plates", strings.NewReader(in))
		r.Header.Set("Content-Type", "application/json")
		r.Header.Set("Authorization", "Bearer "+ts.tokens[ScopeSubmit])
		w := httptest.NewRecorder()
		ts.srv.Handler().ServeHTTP(w, r)
		after := audits(t)
		switch {
		case w.Code >= 500:
			t.Fatalf("%d for %q: %s", w.Code, in, w.Body)
		case w.Code >= 400 && w.Header().Get("Content-Type") != "application/problem+json":
			t.Fatalf("%d without a problem body for %q", w.Code, in)
		case w.Code >= 400 && after != before:
			t.Fatalf("%d, yet %d audit entries were stored for %q", w.Code, after-before, in)
		case w.Code >= 400:
			return ""
		case w.Code != 202:
			t.Fatalf("%d for %q: %s", w.Code, in, w.Body)
		}
		var acc wire.PlateAccepted
		if err := json.Unmarshal(w.Body.Bytes(), &acc); err != nil || after != before+1 {
			t.Fatalf("202 %s with %d new audit entries: %v", w.Body, after-before, err)
		}
		return acc.PlateID
	}
	f.Fuzz(func(t *testing.T, in string) {
		id := post(t, in)
		if id == "" {
			return
		}
		var req wire.PlateRequest
		if err := decodeJSON([]byte(in), &req); err != nil {
			t.Fatalf("accepted, yet decoding again fails: %v", err)
		}
		again, _ := json.Marshal(req)
		id2 := post(t, string(again))
		p, err := store.Plate(ctx, id)
		if err != nil {
			t.Fatal(err)
		}
		p2, err := store.Plate(ctx, id2)
		if err != nil {
			t.Fatalf("round trip %s refused: %v", again, err)
		}
		w, _ := store.Wells(ctx, id)
		w2, _ := store.Wells(ctx, id2)
		if len(w) != len(w2) || p.CurvesTotal != p2.CurvesTotal {
			t.Fatalf("round trip stores differently: %d wells and %d curves vs %d and %d", len(w), p.CurvesTotal, len(w2), p2.CurvesTotal)
		}
	})
}
