package api

import (
	"encoding/json"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/db/dbtest"
)

// FACTS §7 "Agonist applied" over HTTP: rest gK 10 nS at −89.06, gNa 0.5 at
// +66.60, gCl 2 at −64.09 (37 °C, concentrations chosen to give those
// Nernst potentials); 200 channels of 50 pS, Pmax 0.8, EC50 10 µM, nH 1.5,
// at 30 µM with E_rev 0: P_open 0.670888, g_L 6.708876 nS, V −51.303 mV
// (ΔV +27.535); tolerance 0.01 mV. Sent in µM: the answer is molar.
const factsPotential = `{
  "conc_unit": "uM",
  "hill": {"log_ec50": -5, "hill": 1.5, "po_max": 0.8},
  "agonist_conc": [30, 0],
  "channel": {"count": 200, "conductance_ps": 50, "reversal_mv": 0},
  "cell": {"temperature_c": 37,
    "ions": {"k": {"out": 5, "in": 140}, "na": {"out": 145, "in": 12}, "cl": {"out": 110, "in": 10}},
    "resting_conductance_ns": {"k": 10, "na": 0.5, "cl": 2}},
  "threshold_mv": -60}`

func TestPotentialFACTS(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	w := ts.do("POST", "/v1/potential", ScopeRead, factsPotential)
	if w.Code != 200 {
		t.Fatalf("%d %s", w.Code, w.Body)
	}
	var out wire.PotentialResponse
	json.Unmarshal(w.Body.Bytes(), &out)
	check := func(what string, got, want, tol float64) {
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.6f, want %.6f ± %g", what, got, want, tol)
		}
	}
	// 30 µM sent, answered in molar, and said so.
	if out.ConcUnit != "M" || math.Abs(out.Points[0].AgonistConc-3e-5) > 1e-20 || out.Flags == nil || len(out.Flags) != 0 || out.Notes == nil {
		t.Errorf("unit %q, first concentration %v, flags %q, notes %q", out.ConcUnit, out.Points[0].AgonistConc, out.Flags, out.Notes)
	}
	check("rest", out.RestMV, -78.838, 0.01)
	check("E_K", out.NernstMV["k"], -89.06, 0.01)
	p := out.Points[0]
	check("P_open", p.OpenFraction, 0.670888, 1e-6)
	check("g_L", p.GLigandNS, 6.708876, 1e-6)
	check("V", p.VMV, -51.303, 0.01)
	check("ΔV", p.DeltaMV, 27.535, 0.01)
	if v := out.Points[1]; v.OpenFraction != 0 || math.Abs(v.VMV-out.RestMV) > 1e-12 {
		t.Errorf("vehicle point: %+v", v)
	}
	if out.ThresholdCrossed == nil || *out.ThresholdCrossed <= 0 || *out.ThresholdCrossed >= 3e-5 {
		t.Errorf("threshold −60 mV crossed at %v, want below 30 µM (where V = −51.3)", out.ThresholdCrossed)
	}
	if len(out.Cautions) < 2 || out.Cautions[0] != wire.Caution || !strings.Contains(out.Cautions[1], "not a clinical or dosing tool") {
		t.Errorf("cautions %q", out.Cautions)
	}
	// The plot of V and ΔV.
	svg := ts.do("POST", "/v1/potential?format=svg", ScopeRead, factsPotential)
	if svg.Code != 200 || svg.Header().Get("Content-Type") != "image/svg+xml" || !strings.Contains(svg.Body.String(), "ΔV from rest") ||
		!strings.Contains(svg.Body.String(), "research use only") {
		t.Errorf("svg: %d %.200s", svg.Code, svg.Body)
	}
}

// A reversal potential from permeabilities (FACTS §7: PNa = PK with Na⁺
// 145/12 and K⁺ 5/140 at 37 °C reverses at −0.354 mV), and a preset cell.
func TestPotentialPermeabilityAndPreset(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	body := strings.Replace(factsPotential, `"reversal_mv": 0`, `"permeability": {"na": 1, "k": 1}`, 1)
	w := ts.do("POST", "/v1/potential", ScopeRead, body)
	var out wire.PotentialResponse
	json.Unmarshal(w.Body.Bytes(), &out)
	if w.Code != 200 || math.Abs(out.ChannelReversalMV+0.354) > 0.001 {
		t.Errorf("%d reversal %v: %s", w.Code, out.ChannelReversalMV, w.Body)
	}
	w = ts.do("POST", "/v1/potential", ScopeRead, `{"conc_unit":"M","hill":{"log_ec50":-5,"hill":1,"po_max":0.5},"agonist_conc":[1e-5],
		"channel":{"count":100,"conductance_ps":30,"reversal_mv":0,"mg_mm":1},"cell":{"preset":"muscle"}}`)
	json.Unmarshal(w.Body.Bytes(), &out)
	if w.Code != 200 || out.Points[0].MgUnblocked == nil || !strings.Contains(strings.Join(out.Cautions, " "), "muscle preset") {
		t.Errorf("preset: %d %s", w.Code, w.Body)
	}
}

// A stored, bootstrapped fit gives an interval on V, regenerated from its
// seed; the interval holds the point estimate.
func TestPotentialFromStoredCurve(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	w := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"bootstrap":{"resamples":300,"seed":4}`))
	var fitRes wire.StoredFit
	json.Unmarshal(w.Body.Bytes(), &fitRes)
	body := `{"conc_unit":"M","curve_id":"` + fitRes.ID + `","po_max":0.7,"agonist_conc":[1,4.5,20],
		"channel":{"count":200,"conductance_ps":50,"reversal_mv":0},"cell":{"preset":"neuron"}}`
	a := ts.do("POST", "/v1/potential", ScopeRead, body)
	if a.Code != 200 {
		t.Fatalf("%d %s", a.Code, a.Body)
	}
	var out wire.PotentialResponse
	json.Unmarshal(a.Body.Bytes(), &out)
	for _, p := range out.Points {
		if p.CI == nil || !(p.CI.VMV[0] <= p.VMV && p.VMV <= p.CI.VMV[1]) || p.CI.VMV[0] == p.CI.VMV[1] {
			t.Errorf("point %+v ci %+v", p, p.CI)
		}
	}
	// Reproducible: the same request gives the same interval.
	b := ts.do("POST", "/v1/potential", ScopeRead, body)
	if a.Body.String() != b.Body.String() {
		t.Error("two identical requests gave different answers")
	}
}

func TestPotentialBadInput(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	base := factsPotential
	cases := []struct{ from, to, pointer string }{
		{`"po_max": 0.8`, `"po_max": 1.8`, "/hill/po_max"},
		{`"hill": 1.5,`, `"hill": -1.5,`, "/hill/hill"},
		{`[30, 0]`, `[30, -1]`, "/agonist_conc/1"},
		{`"conc_unit": "uM",`, ``, "/conc_unit"},
		{`"conc_unit": "uM",`, `"conc_unit": "furlong",`, "/conc_unit"},
		{`"conc_unit": "uM",`, `"conc_unit": "UM",`, "/conc_unit"},
		{`"count": 200`, `"count": 0`, "/channel/count"},
		{`"reversal_mv": 0`, `"reversal_mv": 0, "permeability": {"na": 1}`, "/channel"},
		{`"reversal_mv": 0`, `"permeability": {"mg": 1}`, "/channel/permeability/mg"},
		{`"k": {"out": 5, "in": 140}`, `"k": {"out": 5, "in": 0}`, "/cell/ions/k"},
		{`"temperature_c": 37`, `"temperature_c": 370`, "/cell/temperature_c"},
		{`"cl": 2}`, `"cl": 2, "ca": 1}`, "/cell/resting_conductance_ns/ca"},
		{`"hill": {"log_ec50": -5, "hill": 1.5, "po_max": 0.8},`, `"curve_id": "nope",`, "/curve_id"},
	}
	for _, c := range cases {
		w := ts.do("POST", "/v1/potential", ScopeRead, strings.Replace(base, c.from, c.to, 1))
		if w.Code != 422 {
			t.Errorf("%s: %d %s", c.to, w.Code, w.Body)
			continue
		}
		if p := problemOf(t, w); len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer {
			t.Errorf("%s: errors %+v, want %s", c.to, p.Errors, c.pointer)
		}
	}
}

// Concentrations outside the plausible range of a drug (fit.MinPlausibleConc
// to fit.MaxPlausibleConc), as micromolar numbers sent as molar, are
// flagged implausible_concentration with a note pointing at conc_unit, as a
// fit's are; so is a Hill curve whose EC50 lies outside it, and a stored
// fit that carries the flag.
func TestPotentialImplausibleConcentration(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	for _, c := range []struct{ name, from, to, note string }{
		{"µM numbers as molar", `"conc_unit": "uM"`, `"conc_unit": "M"`, "above the plausible 0.1 M"},
		{"below 1 fM", `"conc_unit": "uM"`, `"conc_unit": "pM", "agonist_id": "x"`, ""},
		{"EC50 of 3 M", `"log_ec50": -5`, `"log_ec50": 0.5`, "the EC50, 3.16 M"},
	} {
		body := strings.Replace(factsPotential, c.from, c.to, 1)
		if c.name == "below 1 fM" {
			body = strings.Replace(body, `[30, 0]`, `[0.0001, 30]`, 1)
			c.note = "below the plausible 1e-15 M"
		}
		w := ts.do("POST", "/v1/potential", ScopeRead, body)
		var out wire.PotentialResponse
		json.Unmarshal(w.Body.Bytes(), &out)
		if w.Code != 200 || len(out.Flags) != 1 || out.Flags[0] != "implausible_concentration" || len(out.Notes) != 1 ||
			!strings.Contains(out.Notes[0], c.note) {
			t.Errorf("%s: %d flags %q notes %q", c.name, w.Code, out.Flags, out.Notes)
		}
	}
	// A stored fit flagged for its concentrations (R's DNase run 1 read as
	// molar reaches 12.5 M) passes its flag on.
	w := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, ""))
	var fitRes wire.StoredFit
	json.Unmarshal(w.Body.Bytes(), &fitRes)
	if !strings.Contains(strings.Join(fitRes.Flags, ","), "implausible_concentration") {
		t.Fatalf("the DNase fit is not flagged: %q", fitRes.Flags)
	}
	w = ts.do("POST", "/v1/potential", ScopeRead, `{"conc_unit":"nM","curve_id":"`+fitRes.ID+`","agonist_conc":[10,100],
		"channel":{"count":200,"conductance_ps":50,"reversal_mv":0},"cell":{"preset":"neuron"}}`)
	var out wire.PotentialResponse
	json.Unmarshal(w.Body.Bytes(), &out)
	if w.Code != 200 || len(out.Flags) != 1 || len(out.Notes) != 1 || !strings.Contains(out.Notes[0], "stored fit (curve_id) is flagged") {
		t.Errorf("stored fit: %d flags %q notes %q", w.Code, out.Flags, out.Notes)
	}
}

// svgFigure is what the potential figure tests read from the SVG: the
// title, the line's vertices and the dots, in pixels.
type svgFigure struct {
	title       string
	line, dots  [][2]float64
	hline, band bool
	text        string
}

func readFigure(t *testing.T, svg string) svgFigure {
	t.Helper()
	var f svgFigure
	f.text = svg
	d := xml.NewDecoder(strings.NewReader(svg))
	inTitle := false
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("not well-formed: %v", err)
		}
		switch e := tok.(type) {
		case xml.StartElement:
			attr := map[string]string{}
			for _, a := range e.Attr {
				attr[a.Name.Local] = a.Value
			}
			switch {
			case e.Name.Local == "text" && attr["font-weight"] == "bold":
				inTitle = true
			case e.Name.Local == "polyline":
				for _, pt := range strings.Fields(attr["points"]) {
					var x, y float64
					if _, err := fmt.Sscanf(pt, "%g,%g", &x, &y); err != nil {
						t.Fatalf("polyline point %q: %v", pt, err)
					}
					f.line = append(f.line, [2]float64{x, y})
				}
			case e.Name.Local == "circle":
				x, _ := strconv.ParseFloat(attr["cx"], 64)
				y, _ := strconv.ParseFloat(attr["cy"], 64)
				f.dots = append(f.dots, [2]float64{x, y})
			case e.Name.Local == "line" && attr["class"] == "hline":
				f.hline = true
			case e.Name.Local == "polygon":
				f.band = true
			}
		case xml.CharData:
			if inTitle {
				f.title += string(e)
			}
		case xml.EndElement:
			inTitle = false
		}
	}
	return f
}

// The potential figure draws V on a dense log-spaced grid, not by joining
// the requested concentrations: its line has many more vertices than the
// request has concentrations and passes through every requested dot
// within the SVG's 0.1-px rounding; the threshold is a labelled line when
// given and absent otherwise; the title names the agonist and the channel,
// a stored fit's compound rather than the fit's id.
func TestPotentialFigureSmooth(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	body := strings.Replace(factsPotential, `[30, 0]`, `[0, 0.3, 3, 10, 30, 300]`, 1)
	body = strings.Replace(body, `"conc_unit": "uM",`, `"conc_unit": "uM", "agonist_id": "demo-ag-1",`, 1)
	body = strings.Replace(body, `"count": 200,`, `"name": "LGX-7", "count": 200,`, 1)
	w := ts.do("POST", "/v1/potential?format=svg", ScopeRead, body)
	if w.Code != 200 {
		t.Fatalf("%d %s", w.Code, w.Body)
	}
	f := readFigure(t, w.Body.String())
	if f.title != "demo-ag-1 on LGX-7" {
		t.Errorf("title %q", f.title)
	}
	if len(f.line) < 100 || len(f.dots) != 6 {
		t.Fatalf("%d vertices, %d dots: want ≥ 100 and 6", len(f.line), len(f.dots))
	}
	for i, d := range f.dots[1:] { // the first is the vehicle, left of the axis break
		near := math.Inf(1)
		for _, v := range f.line {
			near = math.Min(near, math.Max(math.Abs(v[0]-d[0]), math.Abs(v[1]-d[1])))
		}
		if near > 0.1 {
			t.Errorf("dot %d at %v is %.2f px from the line", i+1, d, near)
		}
	}
	// The agonist depolarises towards E_rev 0: the line rises with
	// concentration (SVG y grows downwards; neighbours may round to the
	// same pixel).
	for i := 1; i < len(f.line); i++ {
		if f.line[i][0] < f.line[i-1][0] || f.line[i][1] > f.line[i-1][1] {
			t.Fatalf("vertex %d %v after %v", i, f.line[i], f.line[i-1])
		}
	}
	if !f.hline || !strings.Contains(f.text, "threshold -60.0 mV") {
		t.Error("no threshold line with its label")
	}
	w = ts.do("POST", "/v1/potential?format=svg", ScopeRead, strings.Replace(body, `,
  "threshold_mv": -60`, ``, 1))
	if f := readFigure(t, w.Body.String()); w.Code != 200 || f.hline || strings.Contains(f.text, "threshold") {
		t.Errorf("without a threshold: %d, a threshold line is drawn", w.Code)
	}
	// A stored fit: titled by its compound, its id in the subtitle, and a
	// labelled bootstrap band on the same grid.
	fw := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"compound_id":"demo-ag-2","bootstrap":{"resamples":200,"seed":4}`))
	var fitRes wire.StoredFit
	json.Unmarshal(fw.Body.Bytes(), &fitRes)
	if fw.Code != 201 {
		t.Fatalf("fit: %d %s", fw.Code, fw.Body)
	}
	w = ts.do("POST", "/v1/potential?format=svg", ScopeRead, `{"conc_unit":"M","curve_id":"`+fitRes.ID+`","po_max":0.7,"agonist_conc":[0.1,1,4.5,20],
		"channel":{"count":200,"conductance_ps":50,"reversal_mv":0},"cell":{"preset":"neuron"}}`)
	f = readFigure(t, w.Body.String())
	if w.Code != 200 || f.title != "demo-ag-2 on 200 × 50 pS channels" || !strings.Contains(f.text, fitRes.ID) || strings.Contains(f.title, fitRes.ID) ||
		!f.band || !strings.Contains(f.text, "bootstrap band") || len(f.line) < 100 {
		t.Errorf("stored fit: %d title %q band %v, %d vertices", w.Code, f.title, f.band, len(f.line))
	}
}
