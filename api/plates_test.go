package api

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/plate"
)

// invented384 is an invented 384-well agonist plate: max controls in
// columns 1–2, min controls in 23–24, and 16 compounds, one per row, at 10
// concentrations in duplicate (columns 3–22), generated from known Hill
// parameters with noise of 2 % of the window. It returns the wells and each
// compound's true log EC50 and slope.
func invented384(seed uint64) ([]wire.Well, map[string][2]float64) {
	rng := rand.New(rand.NewPCG(seed, 384))
	const lo, hi = 200.0, 2200.0
	truth := map[string][2]float64{}
	var ws []wire.Well
	f := plate.Plate384
	num := func(v float64) *float64 { return &v }
	for r := 0; r < 16; r++ {
		cpd := fmt.Sprintf("demo-cpd-%03d", 200+r)
		logEC := -8.5 + 2.5*float64(r)/15
		h := 0.8 + 0.1*float64(r%6)
		truth[cpd] = [2]float64{logEC, h}
		for c := 0; c < 24; c++ {
			w := wire.Well{Well: f.Name(plate.Well{Row: r, Col: c})}
			switch {
			case c < 2:
				w.Role, w.Value = "max_control", num(hi+40*rng.NormFloat64())
			case c >= 22:
				w.Role, w.Value = "min_control", num(lo+40*rng.NormFloat64())
			default:
				conc := 1e-10 * math.Pow(10, 0.5*float64((c-2)/2)) // 0.1 nM … 3 µM
				y := lo + (hi-lo)*fit.Hill.Value([]float64{0, 1, logEC, h}, conc) + 40*rng.NormFloat64()
				w.Role, w.CompoundID, w.Conc, w.Value = "sample", cpd, num(conc), num(y)
			}
			ws = append(ws, w)
		}
	}
	return ws, truth
}

func startWorkers(t *testing.T, ts *testServer) {
	t.Helper()
	if err := ts.store.StartWorkers(context.Background(), ts.srv.Service().RunPlateJob, 2); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { ts.store.StopWorkers(context.Background()) })
}

// The JSON plate goes through the queue on both engines and comes back
// QC'd with every curve; the known parameters lie inside their intervals.
func TestPlateJSONEndToEnd(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		startWorkers(t, ts)
		wells, truth := invented384(1)
		seed := uint64(11) // fixed, so that the check below is deterministic
		body, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "LK-0384-01", Format: 384, Mode: "agonist", Wells: wells,
			MeasuredAt: "2026-11-30T10:00:00Z", Fit: &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: 300, Seed: &seed}}})
		w := ts.do("POST", "/v1/plates?wait=60s", ScopeSubmit, string(body))
		if w.Code != 200 {
			t.Fatalf("%d %s", w.Code, w.Body)
		}
		var v wire.PlateView
		json.Unmarshal(w.Body.Bytes(), &v)
		if v.Status != db.PlateDone || len(v.Curves) != 16 || v.Progress.Done != 16 || v.Progress.Total != 16 {
			t.Fatalf("plate %s, %d curves, progress %+v", v.Status, len(v.Curves), v.Progress)
		}
		var qc plate.QC
		json.Unmarshal(v.QC, &qc)
		// Controls 2200 ± 40 vs 200 ± 40: Z′ = 1 − 3·80/2000 = 0.88 in
		// expectation.
		if !qc.Pass || math.Abs(qc.ZPrime-0.88) > 0.04 {
			t.Errorf("qc %+v", qc)
		}
		// With 16 curves and 95 % intervals, more than 2 misses has
		// probability 0.043 (binomial); the data are seeded, so this is a
		// fixed check, declared before running.
		missed := 0
		for _, raw := range v.Curves {
			var pc wire.PlateCurve
			json.Unmarshal(raw, &pc)
			tr := truth[pc.CompoundID]
			for _, p := range pc.Params {
				if p.Name == "log_ec50" && !(float64(p.BootCI[0]) <= tr[0] && tr[0] <= float64(p.BootCI[1])) {
					missed++
					t.Logf("%s: log_ec50 %v, interval %v, truth %v", pc.CompoundID, p.Estimate, p.BootCI, tr[0])
				}
			}
		}
		if missed > 2 {
			t.Errorf("%d of 16 log_ec50 intervals miss the truth", missed)
		}
		j := ts.do("GET", fmt.Sprintf("/v1/jobs/%d", v.JobID), ScopeRead, "")
		var jv wire.JobView
		json.Unmarshal(j.Body.Bytes(), &jv)
		if j.Code != 200 || jv.Status != "done" || jv.PlateID != v.PlateID {
			t.Errorf("job: %d %s", j.Code, j.Body)
		}
		csvOut := ts.do("GET", "/v1/plates/"+v.PlateID+"/curves.csv", ScopeRead, "")
		if lines := strings.Count(csvOut.Body.String(), "\n"); csvOut.Code != 200 || lines != 17 {
			t.Errorf("curves.csv: %d, %d lines", csvOut.Code, lines)
		}
		hm := ts.do("GET", "/v1/plates/"+v.PlateID+"/heatmap.svg", ScopeRead, "")
		if hm.Code != 200 || strings.Count(hm.Body.String(), `class="well `) != 384 || !strings.Contains(hm.Body.String(), "QC pass") {
			t.Errorf("heatmap: %d", hm.Code)
		}
	})
}

// The long CSV and the reader grid with a saved layout give the same plate.
func TestPlateCSVAndGrid(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	startWorkers(t, ts)
	wells, _ := invented384(2)
	var long strings.Builder
	long.WriteString("well,role,compound_id,conc,value\n")
	grid := map[string]float64{}
	var layout []wire.Well
	for _, w := range wells {
		conc := ""
		if w.Conc != nil {
			conc = fmt.Sprint(*w.Conc * 1e9) // nM
		}
		name := w.Well // written unpadded (A1), as many readers do
		if name[1] == '0' {
			name = name[:1] + name[2:]
		}
		fmt.Fprintf(&long, "%s,%s,%s,%s,%v\n", name, w.Role, w.CompoundID, conc, *w.Value)
		grid[w.Well] = *w.Value
		lw := w
		lw.Value = nil
		layout = append(layout, lw)
	}
	q := "format=384&barcode=LK-CSV&conc_unit=nM&resamples=100&seed=5&wait=60s"
	a := ts.do("POST", "/v1/plates?"+q, ScopeSubmit, long.String(), "Content-Type", "text/csv")
	if a.Code != 200 {
		t.Fatalf("long CSV: %d %s", a.Code, a.Body)
	}
	lb, _ := json.Marshal(wire.LayoutRequest{ConcUnit: "M", ID: "lx-384-a", Name: "16 × 10 × 2", Format: 384, Wells: layout})
	if w := ts.do("POST", "/v1/layouts", ScopeSubmit, string(lb)); w.Code != 201 {
		t.Fatalf("layout: %d %s", w.Code, w.Body)
	}
	var g strings.Builder
	g.WriteString("")
	for c := 1; c <= 24; c++ {
		fmt.Fprintf(&g, ",%d", c)
	}
	g.WriteString("\n")
	for r := 0; r < 16; r++ {
		g.WriteString(string(rune('A' + r)))
		for c := 0; c < 24; c++ {
			fmt.Fprintf(&g, ",%v", grid[plate.Plate384.Name(plate.Well{Row: r, Col: c})])
		}
		g.WriteString("\n")
	}
	b := ts.do("POST", "/v1/plates?layout_id=lx-384-a&format=384&barcode=LK-GRID&resamples=100&seed=5&wait=60s", ScopeSubmit, g.String(), "Content-Type", "text/csv")
	if b.Code != 200 {
		t.Fatalf("grid: %d %s", b.Code, b.Body)
	}
	var va, vb wire.PlateView
	json.Unmarshal(a.Body.Bytes(), &va)
	json.Unmarshal(b.Body.Bytes(), &vb)
	if len(va.Curves) != 16 || len(vb.Curves) != 16 {
		t.Fatalf("%d and %d curves", len(va.Curves), len(vb.Curves))
	}
	for i := range va.Curves {
		var ca, cb wire.PlateCurve
		json.Unmarshal(va.Curves[i], &ca)
		json.Unmarshal(vb.Curves[i], &cb)
		if ca.Key != cb.Key || math.Abs(float64(ca.PEC50-cb.PEC50)) > 1e-9 {
			t.Errorf("curve %d: %s pEC50 %v (long CSV) vs %s %v (grid)", i, ca.Key, ca.PEC50, cb.Key, cb.PEC50)
		}
	}
}

// Invalid plates store nothing and point at the well, row or parameter.
func TestPlateBadInput(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	wells, _ := invented384(3)
	mk := func(mod func(*wire.PlateRequest)) string {
		req := wire.PlateRequest{ConcUnit: "M", Barcode: "B", Format: 384, Wells: append([]wire.Well(nil), wells...)}
		mod(&req)
		b, _ := json.Marshal(req)
		return string(b)
	}
	cases := []struct {
		body    string
		pointer string
	}{
		{mk(func(r *wire.PlateRequest) { r.Wells[3].Well = "Q99" }), "/wells/3/well"},
		{mk(func(r *wire.PlateRequest) { r.Wells[5].Well = r.Wells[4].Well }), "/wells/5/well"},
		{mk(func(r *wire.PlateRequest) { r.Wells[7].Role = "blank" }), "/wells/7/role"},
		{mk(func(r *wire.PlateRequest) { r.Wells[2].CompoundID = "" }), "/wells/2/compound_id"},
		{mk(func(r *wire.PlateRequest) { r.Wells[2].Value = nil }), "/wells/2/value"},
		{mk(func(r *wire.PlateRequest) { r.Format = 100 }), "/format"},
		{mk(func(r *wire.PlateRequest) { r.Mode = "both" }), "/mode"},
		{mk(func(r *wire.PlateRequest) { r.Fit = &wire.PlateFit{Model: "hill9"} }), "/fit/model"},
		{mk(func(r *wire.PlateRequest) { r.Fit = &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: -1}} }), "/fit/bootstrap/resamples"},
		{mk(func(r *wire.PlateRequest) {
			for i := range r.Wells {
				if r.Wells[i].Role == "min_control" {
					r.Wells[i].Role = "empty"
				}
			}
		}), "/wells"},
	}
	for _, c := range cases {
		w := ts.do("POST", "/v1/plates", ScopeSubmit, c.body)
		if w.Code != 422 {
			t.Errorf("want 422 at %s, got %d %s", c.pointer, w.Code, w.Body)
			continue
		}
		if p := problemOf(t, w); len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer {
			t.Errorf("errors %+v, want %s", p.Errors, c.pointer)
		}
	}
	csvBad := "well,role,compound_id,conc,value\nA1,max_control,,,100\nA2,sample,X,1e-9,abc\n"
	w := ts.do("POST", "/v1/plates?conc_unit=M&format=384&barcode=B", ScopeSubmit, csvBad, "Content-Type", "text/csv")
	if p := problemOf(t, w); w.Code != 422 || len(p.Errors) == 0 || p.Errors[0].Row != 3 || p.Errors[0].Column != 5 {
		t.Errorf("bad CSV: %d %+v", w.Code, p)
	}
	if p, err := ts.store.Plate(context.Background(), "x"); err == nil {
		t.Errorf("a plate was stored: %+v", p)
	}
}

// A worker killed mid-job (its context cancelled) leaves no curves; the
// job run again completes with every curve once.
func TestPlateJobInterrupted(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	wells, _ := invented384(4)
	body, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "LK-KILL", Format: 384, Wells: wells, Fit: &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: 5000}}})
	w := ts.do("POST", "/v1/plates", ScopeSubmit, string(body))
	if w.Code != 202 {
		t.Fatalf("%d %s", w.Code, w.Body)
	}
	var acc struct {
		PlateID string `json:"plate_id"`
		JobID   int64  `json:"job_id"`
	}
	json.Unmarshal(w.Body.Bytes(), &acc)
	ctx, cancel := context.WithCancel(context.Background())
	go func() { time.Sleep(20 * time.Millisecond); cancel() }()
	if err := ts.srv.Service().RunPlateJob(ctx, acc.PlateID); err == nil {
		t.Fatal("an interrupted job reported success")
	}
	cs, _ := ts.store.PlateCurves(context.Background(), acc.PlateID)
	if len(cs) != 0 {
		t.Fatalf("%d curves stored by an interrupted job", len(cs))
	}
	if err := ts.srv.Service().RunPlateJob(context.Background(), acc.PlateID); err != nil {
		t.Fatal(err)
	}
	if err := ts.srv.Service().RunPlateJob(context.Background(), acc.PlateID); err != nil { // a late duplicate run
		t.Fatal(err)
	}
	cs, _ = ts.store.PlateCurves(context.Background(), acc.PlateID)
	p, _ := ts.store.Plate(context.Background(), acc.PlateID)
	if len(cs) != 16 || p.Status != db.PlateDone {
		t.Errorf("after the rerun: %d curves, status %s", len(cs), p.Status)
	}
}

// Layouts are checked by the same plate rules (without values), and every
// broken rule of a plate is listed with its pointer or CSV row.
func TestLayoutAndPlateRules(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	wells, _ := invented384(5)
	layout := func(mod func([]wire.Well)) string {
		ws := make([]wire.Well, len(wells))
		for i, w := range wells {
			w.Value = nil
			ws[i] = w
		}
		mod(ws)
		b, _ := json.Marshal(wire.LayoutRequest{ConcUnit: "M", ID: "l1", Name: "l", Format: 384, Wells: ws})
		return string(b)
	}
	one := 1.0
	for _, c := range []struct {
		body, pointer string
	}{
		{layout(func(ws []wire.Well) { ws[9].Well = "Q1" }), "/wells/9/well"},
		{layout(func(ws []wire.Well) { ws[9].Value = &one }), "/wells/9/value"},
		{layout(func(ws []wire.Well) { ws[4].Conc = nil }), "/wells/4/conc"},
		{layout(func(ws []wire.Well) { ws[4].AntagonistConc = &one }), "/wells/4/antagonist_id"},
		{layout(func(ws []wire.Well) {
			for i := range ws {
				if ws[i].Role == "max_control" {
					ws[i].Role = "excluded"
				}
			}
		}), "/wells"},
	} {
		w := ts.do("POST", "/v1/layouts", ScopeSubmit, c.body)
		if p := problemOf(t, w); w.Code != 422 || len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer {
			t.Errorf("layout: want 422 at %s, got %d %s", c.pointer, w.Code, w.Body)
		}
	}
	if _, err := ts.store.Layout(context.Background(), "l1"); err == nil {
		t.Error("an invalid layout was stored")
	}
	// Two broken wells: both listed, in order.
	req := wire.PlateRequest{ConcUnit: "M", Barcode: "B", Format: 384, Wells: append([]wire.Well(nil), wells...)}
	req.Wells[2].CompoundID, req.Wells[30].Role = "", "blank"
	b, _ := json.Marshal(req)
	w := ts.do("POST", "/v1/plates", ScopeSubmit, string(b))
	if p := problemOf(t, w); w.Code != 422 || len(p.Errors) != 2 || p.Errors[0].Pointer != "/wells/2/compound_id" || p.Errors[1].Pointer != "/wells/30/role" {
		t.Errorf("two broken wells: %d %s", w.Code, w.Body)
	}
	// A CSV sample without a concentration points at its row.
	csvBody := "well,role,compound_id,conc,value\nA1,max_control,,,100\nA2,max_control,,,100\nA3,min_control,,,0\nA4,min_control,,,0\nA5,sample,X,,50\n"
	w = ts.do("POST", "/v1/plates?conc_unit=M&format=96&barcode=B", ScopeSubmit, csvBody, "Content-Type", "text/csv")
	if p := problemOf(t, w); w.Code != 422 || len(p.Errors) != 1 || p.Errors[0].Row != 6 || p.Errors[0].Column != 4 ||
		!strings.Contains(p.Errors[0].Detail, "concentration") {
		t.Errorf("CSV without conc: %d %s", w.Code, w.Body)
	}
	// A grid upload takes its concentrations from the layout, in molar.
	w = ts.do("POST", "/v1/plates?format=384&barcode=B&layout_id=l1&conc_unit=nM", ScopeSubmit, "x", "Content-Type", "text/csv")
	if p := problemOf(t, w); w.Code != 400 || len(p.Errors) == 0 || p.Errors[0].Parameter != "conc_unit" {
		t.Errorf("grid with conc_unit: %d %s", w.Code, w.Body)
	}
}

// A plate whose min controls are all 0 (background-subtracted data) keeps
// its QC on both engines: signal/background is reported as unbounded
// (null with signal_background_unbounded true), the min control's CV,
// 0/0, as null; the plate passes on its other figures.
func TestPlateZeroMinControls(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		startWorkers(t, ts)
		wells, _ := invented384(6)
		for i := range wells {
			if wells[i].Role == "min_control" {
				zero := 0.0
				wells[i].Value = &zero
			}
		}
		seed := uint64(3)
		body, _ := json.Marshal(wire.PlateRequest{ConcUnit: "M", Barcode: "LK-BGSUB", Format: 384, Wells: wells,
			Fit: &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: 50, Seed: &seed}}})
		w := ts.do("POST", "/v1/plates?wait=60s", ScopeSubmit, string(body))
		if w.Code != 200 {
			t.Fatalf("%d %s", w.Code, w.Body)
		}
		var v wire.PlateView
		json.Unmarshal(w.Body.Bytes(), &v)
		if v.Status != db.PlateDone || len(v.Curves) != 16 {
			t.Fatalf("plate %s with %d curves", v.Status, len(v.Curves))
		}
		var raw map[string]any
		if err := json.Unmarshal(v.QC, &raw); err != nil || raw == nil {
			t.Fatalf("qc %s: %v", v.QC, err)
		}
		if sb, ok := raw["signal_background"]; !ok || sb != nil || raw["signal_background_unbounded"] != true {
			t.Errorf("signal/background: %s", v.QC)
		}
		if cv, _ := raw["cv"].(map[string]any); cv == nil || cv["min_control"] != nil || cv["max_control"] == nil {
			t.Errorf("cv: %s", v.QC)
		}
		// Controls 2200 ± 40 vs exactly 0: Z′ = 1 − 3·40/2200 ≈ 0.945.
		if z, _ := raw["z_prime"].(float64); raw["pass"] != true || math.Abs(z-0.945) > 0.02 {
			t.Errorf("z_prime %v, pass %v", raw["z_prime"], raw["pass"])
		}
		p, err := store.Plate(context.Background(), v.PlateID)
		if err != nil || !strings.Contains(string(p.QC), `"signal_background_unbounded":true`) {
			t.Errorf("stored QC %s: %v", p.QC, err)
		}
		hm := ts.do("GET", "/v1/plates/"+v.PlateID+"/heatmap.svg", ScopeRead, "")
		if hm.Code != 200 || !strings.Contains(hm.Body.String(), "QC pass") {
			t.Errorf("heatmap: %d", hm.Code)
		}
	})
}

// A grid that lacks a value for a well its layout reads names the well.
func TestGridMissingValue(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	num := func(v float64) *float64 { return &v }
	layout := wire.LayoutRequest{ConcUnit: "M", ID: "g96", Name: "g", Format: 96, Wells: []wire.Well{
		{Well: "A1", Role: "max_control"}, {Well: "B1", Role: "max_control"},
		{Well: "A12", Role: "min_control"}, {Well: "B12", Role: "min_control"},
		{Well: "C5", Role: "sample", CompoundID: "X", Conc: num(1e-6)},
	}}
	b, _ := json.Marshal(layout)
	if w := ts.do("POST", "/v1/layouts", ScopeSubmit, string(b)); w.Code != 201 {
		t.Fatalf("layout: %d %s", w.Code, w.Body)
	}
	grid := ",1,12\nA,100,1\nB,101,2\n" // no column 5: C05 has no value
	w := ts.do("POST", "/v1/plates?layout_id=g96&format=96&barcode=G", ScopeSubmit, grid, "Content-Type", "text/csv")
	if p := problemOf(t, w); w.Code != 422 || len(p.Errors) != 1 || !strings.Contains(p.Errors[0].Detail, "C05") ||
		p.Errors[0].Parameter != "" {
		t.Errorf("%d %s", w.Code, w.Body)
	}
}
