package api

import (
	"context"
	"encoding/json"
	"errors"
	"net/http/httptest"
	"os"
	"strings"
	"testing"

	"sluice/api/service"
	"sluice/db"
	"sluice/db/dbtest"
)

// FuzzPlateJSON: any JSON body gives a validated plate or a 4xx error with
// fields, never a panic or a 5xx, and decoding round-trips: a validated
// plate's request, encoded and decoded again, validates the same. The body
// also goes through the write path, POST /v1/plates, on PostgreSQL when
// SLUICE_TEST_DATABASE_URL is set (SQLite otherwise): never a 5xx, a 4xx
// is a problem and stores nothing, a 202 stores the plate.
func FuzzPlateJSON(f *testing.F) {
	wells, _ := invented384(9)
	good, _ := json.Marshal(PlateRequest{Barcode: "F", Format: 384, Wells: wells[:80]})
	f.Add(string(good))
	ctrl, _ := json.Marshal(PlateRequest{Barcode: "F\x00\x1b\"\\", Format: 384, Wells: wells[:80]})
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
	audits := func(t *testing.T) int {
		es, err := store.Audit(context.Background(), 1<<20)
		if err != nil {
			t.Fatal(err)
		}
		return len(es)
	}
	f.Fuzz(func(t *testing.T, in string) {
		before := audits(t)
		r := httptest.NewRequest("POST", "/v1/plates", strings.NewReader(in))
		r.Header.Set("Content-Type", "application/json")
		r.Header.Set("Authorization", "Bearer "+ts.tokens[ScopeSubmit])
		w := httptest.NewRecorder()
		ts.srv.Handler().ServeHTTP(w, r)
		switch after := audits(t); {
		case w.Code >= 500:
			t.Fatalf("POST: %d for %q: %s", w.Code, in, w.Body)
		case w.Code >= 400 && w.Header().Get("Content-Type") != "application/problem+json":
			t.Fatalf("POST: %d without a problem body for %q", w.Code, in)
		case w.Code >= 400 && after != before:
			t.Fatalf("POST: %d, yet %d audit entries were stored for %q", w.Code, after-before, in)
		case w.Code == 202:
			var acc struct {
				PlateID string `json:"plate_id"`
			}
			if err := json.Unmarshal(w.Body.Bytes(), &acc); err != nil || after != before+1 {
				t.Fatalf("POST: 202 %s with %d new audit entries: %v", w.Body, after-before, err)
			}
			if _, err := store.Plate(context.Background(), acc.PlateID); err != nil {
				t.Fatalf("POST: 202, plate %s not stored: %v", acc.PlateID, err)
			}
		}

		var req PlateRequest
		if err := decodeJSON([]byte(in), &req); err != nil {
			if s := statusOf(err); s >= 500 {
				t.Fatalf("decode: %d for %q", s, in)
			}
			return
		}
		v, err := ts.srv.validatePlate(&req, wellsFromJSON(req.Wells), jsonLocate)
		if err != nil {
			var re *service.Error
			if s := statusOf(err); s >= 500 || !errors.As(err, &re) {
				t.Fatalf("validate: %d %v for %q", s, err, in)
			}
			return
		}
		again, _ := json.Marshal(req)
		var req2 PlateRequest
		if err := decodeJSON(again, &req2); err != nil {
			t.Fatalf("round trip: %v", err)
		}
		v2, err := ts.srv.validatePlate(&req2, wellsFromJSON(req2.Wells), jsonLocate)
		if err != nil || len(v2.wells) != len(v.wells) || v2.p.CurvesTotal != v.p.CurvesTotal {
			t.Fatalf("round trip validates differently: %v", err)
		}
	})
}
