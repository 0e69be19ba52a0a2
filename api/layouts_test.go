package api

import (
	"encoding/json"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// POST /v1/layouts answers a Location that resolves to the layout with its
// wells; GET /v1/layouts lists it; a layout without controls is refused
// when it is created, not at its first upload.
func TestLayoutRoutes(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		w := ts.do("POST", "/v1/layouts", ScopeSubmit, badLayout96())
		if w.Code != 201 {
			t.Fatalf("%d %s", w.Code, w.Body)
		}
		loc := w.Header().Get("Location")
		g := ts.do("GET", loc, ScopeRead, "")
		var v wire.LayoutView
		if err := json.Unmarshal(g.Body.Bytes(), &v); g.Code != 200 || err != nil {
			t.Fatalf("GET %s: %d %s", loc, g.Code, g.Body)
		}
		if v.ID != "bad-96" || v.Format != 96 || len(v.Wells) != 96 || v.ConcUnit != "M" || v.CreatedBy != "test-submit" {
			t.Errorf("layout %+v", v)
		}
		if w := v.Wells[1]; w.Well != "A02" || w.Conc == nil || *w.Conc != 1e-9 {
			t.Errorf("well %+v", w)
		}
		l := ts.do("GET", "/v1/layouts", ScopeRead, "")
		var list struct{ Layouts []wire.LayoutView }
		json.Unmarshal(l.Body.Bytes(), &list)
		if l.Code != 200 || len(list.Layouts) != 1 || list.Layouts[0].ID != "bad-96" || list.Layouts[0].Wells != nil {
			t.Errorf("list: %d %s", l.Code, l.Body)
		}
		if w := ts.do("GET", "/v1/layouts/nope", ScopeRead, ""); w.Code != 404 {
			t.Errorf("unknown layout: %d", w.Code)
		}
		noControls := `{"id":"nc","name":"x","format":96,"wells":[{"well":"A01","role":"sample","compound_id":"c","conc":1e-9}]}`
		if w := ts.do("POST", "/v1/layouts", ScopeSubmit, noControls); w.Code != 422 {
			t.Errorf("layout without controls: %d %s", w.Code, w.Body)
		}
	})
}
