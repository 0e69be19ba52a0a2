package api

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/db/dbtest"
)

// FACTS §7 "Agonist applied" over HTTP: rest gK 10 nS at −89.06, gNa 0.5 at
// +66.60, gCl 2 at −64.09 (37 °C, concentrations chosen to give those
// Nernst potentials); 200 channels of 50 pS, Pmax 0.8, EC50 10 µM, nH 1.5,
// at 30 µM with E_rev 0: P_open 0.670888, g_L 6.708876 nS, V −51.303 mV
// (ΔV +27.535); tolerance 0.01 mV.
const factsPotential = `{
  "hill": {"log_ec50": -5, "hill": 1.5, "po_max": 0.8},
  "agonist_conc": [3e-5, 0],
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
	w = ts.do("POST", "/v1/potential", ScopeRead, `{"hill":{"log_ec50":-5,"hill":1,"po_max":0.5},"agonist_conc":[1e-5],
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
	body := `{"curve_id":"` + fitRes.ID + `","po_max":0.7,"agonist_conc":[1,4.5,20],
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
		{`[3e-5, 0]`, `[3e-5, -1]`, "/agonist_conc/1"},
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
