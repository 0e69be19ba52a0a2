package api

import (
	"context"
	"testing"

	"sluice/db/dbtest"
)

// Single fits and plates agree: a compound nobody registered is accepted.
// A stored fit registers it (id as name, audited) in its own transaction;
// an unknown assay is still refused.
func TestUnregisteredCompoundAccepted(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	body := `{"model":"hill","conc_unit":"nM","compound_id":"demo-new-1","points":[{"conc":0,"response":1},{"conc":1,"response":4},` +
		`{"conc":10,"response":22},{"conc":30,"response":48},{"conc":100,"response":77},{"conc":1000,"response":97},{"conc":10000,"response":99}]}`
	if w := ts.do("POST", "/v1/fits", ScopeSubmit, body); w.Code != 201 {
		t.Fatalf("fit of an unregistered compound: %d %s", w.Code, w.Body)
	}
	c, err := ts.store.Compound(context.Background(), "demo-new-1")
	if err != nil || c.Name != "demo-new-1" {
		t.Fatalf("compound not registered: %+v, %v", c, err)
	}
	// A second fit of it finds it registered.
	if w := ts.do("POST", "/v1/fits", ScopeSubmit, body); w.Code != 201 {
		t.Fatalf("second fit: %d %s", w.Code, w.Body)
	}
	const long = "well,role,compound_id,conc,value\nA1,max_control,,,100\nB1,max_control,,,101\nA12,min_control,,,1\nB12,min_control,,,2\nC5,sample,demo-new-2,10,50\n"
	if w := ts.do("POST", "/v1/plates?format=96&barcode=R1&conc_unit=nM", ScopeSubmit, long, "Content-Type", "text/csv"); w.Code != 202 {
		t.Fatalf("plate with an unregistered compound: %d %s", w.Code, w.Body)
	}
	bad := `{"model":"hill","conc_unit":"nM","assay_id":"nope","points":[{"conc":1,"response":1},{"conc":10,"response":5},{"conc":100,"response":50},{"conc":1000,"response":95},{"conc":10000,"response":99}]}`
	if p := problemOf(t, ts.do("POST", "/v1/fits", ScopeSubmit, bad)); p.Status != 422 || len(p.Errors) == 0 || p.Errors[0].Pointer != "/assay_id" {
		t.Errorf("unknown assay: %+v", p)
	}
}
