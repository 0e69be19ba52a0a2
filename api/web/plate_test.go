package web

import (
	"bytes"
	"strings"
	"testing"

	"sluice/api/wire"
)

// An antagonist plate's page lists its Schild analyses with their verdict
// and pA2, each linked to its page; one without them says why. (The demo
// has no plate with antagonist concentrations, so the browser test cannot
// see this.)
func TestPlatePageSchildList(t *testing.T) {
	s, err := New(Config{}, Deps{})
	if err != nil {
		t.Fatal(err)
	}
	pa2, slope := wire.Num(7.6412), wire.Num(0.98)
	d := plateData{plateRow: plateRow{PlateView: wire.PlateView{PlateID: "p-1", Barcode: "X-1", Mode: "agonist", Status: "done"}},
		Schild: []wire.SchildResponse{
			{ID: "s-1", AgonistID: "demo-ag-1", AntagonistID: "demo-ant-2", Competitive: true,
				Regression: &wire.SchildRegression{PA2: &wire.Estimate{Estimate: pa2}, Slope: &wire.Estimate{Estimate: slope}}},
			{ID: "s-2", AgonistID: "demo-ag-1", AntagonistID: "demo-ant-3", Flags: []string{"insurmountable"}},
		}}
	var b bytes.Buffer
	if err := s.pages["plate"].Execute(&b, view{Data: d}); err != nil {
		t.Fatal(err)
	}
	page := b.String()
	for _, want := range []string{`href="/schild/s-1"`, `href="/schild/s-2"`, "7.64", "competitive", "not competitive", "demo-ant-3"} {
		if !strings.Contains(page, want) {
			t.Errorf("the plate page lacks %q", want)
		}
	}
	d.Schild, d.Mode = nil, "antagonist"
	b.Reset()
	if err := s.pages["plate"].Execute(&b, view{Data: d}); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "No Schild analysis") {
		t.Errorf("an antagonist plate without analyses does not say so")
	}
}
