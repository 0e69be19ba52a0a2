package api

import (
	"encoding/json"
	"errors"
	"testing"

	"sluice/api/service"
	"sluice/db/dbtest"
)

// FuzzPlateJSON: any JSON body gives a validated plate or a 4xx error with
// fields, never a panic or a 5xx, and decoding round-trips: a validated
// plate's request, encoded and decoded again, validates the same.
func FuzzPlateJSON(f *testing.F) {
	wells, _ := invented384(9)
	good, _ := json.Marshal(PlateRequest{Barcode: "F", Format: 384, Wells: wells[:80]})
	f.Add(string(good))
	f.Add(`{"barcode":"x","format":96,"wells":[{"well":"A1","role":"max_control","value":1}]}`)
	f.Add(`{"format":1536,"wells":[{"well":"AF48","role":"sample","compound_id":"c","conc":-1,"value":2}]}`)
	ts := newTestServer(f, dbtest.SQLite(f))
	f.Fuzz(func(t *testing.T, in string) {
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
