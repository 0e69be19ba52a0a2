package api

import (
	"encoding/json"
	"fmt"
	"math"
	"regexp"
	"strings"
	"testing"

	"sluice/api/figure"
	"sluice/api/wire"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/plate"
)

// schildBody builds the FACTS §2 "Global-fit recovery" design (noise-free:
// Emax 100, log EC50 −6, nH 1.2, pKB 8, s 1; agonist 1 nM–3 mM in half-log
// steps; [B] 0, 10, 100, 1000 nM), in nM, with each curve's top scaled by
// depress([B]) (1 for competitive antagonism).
func schildBody(depress func(b float64) float64, extra string) string {
	var curves []string
	for _, b := range []float64{0, 10, 100, 1000} {
		L := -6 + math.Log10(1+b*1e-9*1e8)
		var pts []string
		for k := 0; k <= 13; k++ {
			a := 1e-9 * math.Pow(10, 0.5*float64(k))
			pts = append(pts, fmt.Sprintf(`{"conc":%g,"response":%.12g}`, a*1e9, fit.Hill.Value([]float64{0, 100 * depress(b), L, 1.2}, a)))
		}
		curves = append(curves, fmt.Sprintf(`{"antagonist_conc":%g,"points":[%s]}`, b, strings.Join(pts, ",")))
	}
	return `{"conc_unit":"nM","agonist_id":"demo-ref","antagonist_id":"demo-ant-1","curves":[` + strings.Join(curves, ",") + `]` + extra + `}`
}

func TestSchildEndpoint(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	w := ts.do("POST", "/v1/schild", ScopeSubmit, schildBody(func(float64) float64 { return 1 }, `,"bootstrap":{"resamples":200,"seed":3}`))
	if w.Code != 201 {
		t.Fatalf("%d %s", w.Code, w.Body)
	}
	var r wire.SchildResponse
	json.Unmarshal(w.Body.Bytes(), &r)
	// FACTS §2: the generating pKB 8 and slope 1 to 1e-6; dose ratios 2, 11, 101.
	if !r.Competitive || r.Global == nil || r.Global.PKB == nil {
		t.Fatalf("%s", w.Body)
	}
	if math.Abs(float64(r.Global.PKB.Estimate)-8) > 1e-6 || math.Abs(float64(r.Global.Slope.Estimate)-1) > 1e-6 {
		t.Errorf("pKB %v slope %v", r.Global.PKB.Estimate, r.Global.Slope.Estimate)
	}
	for i, want := range []float64{2, 11, 101} {
		if got := float64(r.DoseRatios[i].DoseRatio); math.Abs(got-want) > 1e-4*want {
			t.Errorf("dose ratio %d = %v, want %v", i, got, want)
		}
	}
	if r.Regression == nil || math.Abs(float64(r.Regression.PA2.Estimate)-8) > 1e-4 || len(r.Curves) != 4 || r.Caution == "" {
		t.Errorf("regression %+v", r.Regression)
	}
	g := ts.do("GET", "/v1/schild/"+r.ID, ScopeRead, "")
	if g.Code != 200 || g.Body.String() != w.Body.String() {
		t.Errorf("GET: %d", g.Code)
	}
	p := ts.do("GET", "/v1/schild/"+r.ID+"/plot.svg", ScopeRead, "")
	if p.Code != 200 || !strings.Contains(p.Body.String(), "log(DR − 1)") || !strings.Contains(p.Body.String(), "research use only") {
		t.Errorf("plot: %d", p.Code)
	}
	// Titled by its compounds; the run's id only in the subtitle.
	title := regexp.MustCompile(`<text [^>]*font-weight="bold">([^<]*)</text>`).FindStringSubmatch(p.Body.String())
	if title == nil || title[1] != "demo-ref vs demo-ant-1" || !strings.Contains(p.Body.String(), "run "+r.ID) {
		t.Errorf("plot title %q, or no run %s in the subtitle", title, r.ID)
	}
	if got := figure.SchildTitle("", "demo-ant-1"); got != "an unnamed agonist vs demo-ant-1" {
		t.Errorf("title without an agonist: %q", got)
	}
	// A depressed maximum: flagged, no pA2 or pKB, a reason, and the
	// Cheng–Prusoff estimate.
	w = ts.do("POST", "/v1/schild", ScopeSubmit, schildBody(func(b float64) float64 { return 1 / (1 + b/100) }, ""))
	var d wire.SchildResponse
	json.Unmarshal(w.Body.Bytes(), &d)
	if w.Code != 201 || d.Competitive || d.Global != nil || d.Regression != nil || d.Withheld == "" ||
		!strings.Contains(strings.Join(d.Flags, ","), "insurmountable") || d.ChengPrusoff == nil {
		t.Errorf("depressed maximum: %d %s", w.Code, w.Body)
	}
	// Bad input points at the field.
	for _, c := range []struct{ body, pointer string }{
		{`{"conc_unit":"M","curves":[{"antagonist_conc":0,"points":[]}]}`, "/curves"},
		{strings.Replace(schildBody(func(float64) float64 { return 1 }, ""), `"conc_unit":"nM",`, ``, 1), "/conc_unit"},
		{strings.Replace(schildBody(func(float64) float64 { return 1 }, ""), `"antagonist_conc":10,`, `"antagonist_conc":-10,`, 1), "/curves/1/antagonist_conc"},
		{strings.Replace(schildBody(func(float64) float64 { return 1 }, ""), `"antagonist_conc":0,`, `"antagonist_conc":5,`, 1), "/curves"},
	} {
		w := ts.do("POST", "/v1/schild", ScopeSubmit, c.body)
		if pr := problemOf(t, w); w.Code != 422 || len(pr.Errors) == 0 || pr.Errors[0].Pointer != c.pointer {
			t.Errorf("want 422 at %s: %d %s", c.pointer, w.Code, w.Body)
		}
	}
}

// Plates whose wells carry antagonist concentrations get a Schild analysis
// per agonist/antagonist pair.
func TestPlateSchild(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	startWorkers(t, ts)
	f := plate.Plate384
	num := func(v float64) *float64 { return &v }
	var wells []wire.Well
	for r := 0; r < 16; r++ {
		wells = append(wells, wire.Well{Well: f.Name(plate.Well{Row: r, Col: 0}), Role: "max_control", Value: num(1000 + float64(r%3))},
			wire.Well{Well: f.Name(plate.Well{Row: r, Col: 23}), Role: "min_control", Value: num(float64(r % 3))})
	}
	// Rows 0–3: demo-ref with demo-ant-1 at 0, 10, 100, 1000 nM; 14 concentrations.
	for r, b := range []float64{0, 1e-8, 1e-7, 1e-6} {
		L := -6 + math.Log10(1+b*1e8)
		for k := 0; k <= 13; k++ {
			a := 1e-9 * math.Pow(10, 0.5*float64(k))
			w := wire.Well{Well: f.Name(plate.Well{Row: r, Col: 2 + k}), Role: "sample", CompoundID: "demo-ref", Conc: num(a),
				Value: num(1000 * fit.Hill.Value([]float64{0, 1, L, 1.2}, a))}
			if b > 0 {
				w.AntagonistID, w.AntagonistConc = "demo-ant-1", num(b)
			}
			wells = append(wells, w)
		}
	}
	body, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "LK-SCHILD", Format: 384, Wells: wells})
	w := ts.do("POST", "/v1/plates?wait=60s", ScopeSubmit, string(body))
	var v wire.PlateView
	json.Unmarshal(w.Body.Bytes(), &v)
	if w.Code != 200 || len(v.Schild) != 1 || len(v.Curves) != 4 {
		t.Fatalf("%d: %d schild, %d curves: %s", w.Code, len(v.Schild), len(v.Curves), w.Body)
	}
	var r wire.SchildResponse
	json.Unmarshal(v.Schild[0], &r)
	if r.AgonistID != "demo-ref" || r.AntagonistID != "demo-ant-1" || r.Global == nil || r.Global.PKB == nil ||
		math.Abs(float64(r.Global.PKB.Estimate)-8) > 1e-3 {
		t.Errorf("plate schild: %s", v.Schild[0])
	}
}
