package api

import (
	"context"
	"encoding/json"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/db/dbtest"
)

// Concentrations without a unit are refused wherever they are sent — a
// single fit, a potential prediction, a plate as JSON, as long CSV, and the layout a grid upload
// uses — with a 422 that names conc_unit; nothing is stored. A long CSV
// may carry its unit in the header instead.
func TestConcentrationUnitRequired(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	num := func(v float64) *float64 { return &v }
	wells := []wire.Well{
		{Well: "A1", Role: "max_control", Value: num(100)}, {Well: "B1", Role: "max_control", Value: num(101)},
		{Well: "A12", Role: "min_control", Value: num(1)}, {Well: "B12", Role: "min_control", Value: num(2)},
		{Well: "C5", Role: "sample", CompoundID: "demo-ag-1", Conc: num(10), Value: num(50)},
	}
	plateJSON, _ := json.Marshal(wire.PlateRequest{Barcode: "U1", Format: 96, Wells: wells})
	layoutJSON, _ := json.Marshal(wire.LayoutRequest{ID: "u96", Name: "u", Format: 96, Wells: wells})
	const long = "well,role,compound_id,conc,value\nA1,max_control,,,100\nB1,max_control,,,101\nA12,min_control,,,1\nB12,min_control,,,2\nC5,sample,demo-ag-1,10,50\n"
	for _, c := range []struct {
		name, path, body, ctype string
		pointer, parameter      string
		row, col                int
	}{
		{"fit", "/v1/fits", `{"points":[{"conc":1,"response":1},{"conc":10,"response":5},{"conc":100,"response":50},{"conc":1000,"response":95},{"conc":10000,"response":99}]}`,
			"application/json", "/conc_unit", "", 0, 0},
		{"plate JSON", "/v1/plates", string(plateJSON), "application/json", "/conc_unit", "", 0, 0},
		{"potential", "/v1/potential", strings.Replace(factsPotential, `"conc_unit": "uM",`, ``, 1), "application/json", "/conc_unit", "", 0, 0},
		{"layout for a grid", "/v1/layouts", string(layoutJSON), "application/json", "/conc_unit", "", 0, 0},
		{"long CSV", "/v1/plates?format=96&barcode=U2", long, "text/csv", "", "", 1, 4},
		{"long CSV, header and parameter disagree", "/v1/plates?format=96&barcode=U3&conc_unit=uM",
			strings.Replace(long, "conc,", "conc_nM,", 1), "text/csv", "", "", 1, 4},
		{"long CSV, column named concentration", "/v1/plates?format=96&barcode=U4&conc_unit=nM",
			strings.Replace(long, "conc,", "concentration,", 1), "text/csv", "", "", 1, 0},
	} {
		w := ts.do("POST", c.path, ScopeSubmit, c.body, "Content-Type", c.ctype)
		p := problemOf(t, w)
		if w.Code != 422 || len(p.Errors) != 1 || p.Errors[0].Pointer != c.pointer || p.Errors[0].Parameter != c.parameter ||
			p.Errors[0].Row != c.row || (c.col != 0 && p.Errors[0].Column != c.col) {
			t.Errorf("%s: %d %s", c.name, w.Code, w.Body)
			continue
		}
		if d := p.Errors[0].Detail; !strings.Contains(d, "conc") {
			t.Errorf("%s: %q does not name the field", c.name, d)
		}
	}
	if d := problemOf(t, ts.do("POST", "/v1/plates?format=96&barcode=U2", ScopeSubmit, long, "Content-Type", "text/csv")).Errors[0].Detail; !strings.Contains(d, "conc_unit") ||
		!strings.Contains(d, "conc_nM") {
		t.Errorf("long CSV without a unit: %q should name conc_unit and the header form", d)
	}
	ctx := context.Background()
	if es, err := ts.store.Audit(ctx, 100); err != nil || len(es) != 0 {
		t.Errorf("refused requests left %d audit entries (%v)", len(es), err)
	}
	if _, err := ts.store.Layout(ctx, "u96"); err == nil {
		t.Error("a layout without a unit was stored")
	}
	// The unit in the header is enough, and is the plate's unit.
	w := ts.do("POST", "/v1/plates?format=96&barcode=U5", ScopeSubmit, strings.Replace(long, "conc,", "conc (nM),", 1), "Content-Type", "text/csv")
	if w.Code != 202 {
		t.Fatalf("header unit: %d %s", w.Code, w.Body)
	}
	var acc wire.PlateAccepted
	json.Unmarshal(w.Body.Bytes(), &acc)
	p, err := ts.store.Plate(ctx, acc.PlateID)
	if err != nil || p.ConcUnit != "nM" {
		t.Fatalf("stored plate: %+v, %v", p, err)
	}
}
