package api

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"

	"sluice/db/dbtest"
)

// BenchmarkPotentialStoredMg is the slow request: POST
// /v1/potential for a stored fit with B = 1000 (DNase run 1, seed 4), 200
// concentrations and a 1 mM Mg²⁺ block, on the neuron preset, through the
// handler (SQLite store). It took 29 s before the Mg²⁺ root continued
// from the previous one.
func BenchmarkPotentialStoredMg(b *testing.B) {
	ts := newTestServer(b, dbtest.SQLite(b))
	w := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(b, `,"bootstrap":{"resamples":1000,"seed":4}`))
	var fitRes struct{ ID string }
	if err := json.Unmarshal(w.Body.Bytes(), &fitRes); err != nil || w.Code != 201 {
		b.Fatalf("%d %s", w.Code, w.Body)
	}
	concs := make([]string, 200)
	for i := range concs {
		concs[i] = fmt.Sprintf("%g", 0.01*math.Pow(10, 4*float64(i)/199))
	}
	body := `{"curve_id":"` + fitRes.ID + `","po_max":0.7,"agonist_conc":[` + strings.Join(concs, ",") + `],
		"channel":{"count":200,"conductance_ps":50,"reversal_mv":0,"mg_mm":1},"cell":{"preset":"neuron"}}`
	for b.Loop() {
		if w := ts.do("POST", "/v1/potential", ScopeRead, body); w.Code != 200 {
			b.Fatalf("%d %s", w.Code, w.Body)
		}
	}
}
