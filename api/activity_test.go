package api

import (
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// curveBody is a POST /v1/fits body of 8 concentrations in duplicate (molar)
// with responses f(conc) plus a fixed ±1 pattern.
func curveBody(f func(conc float64) float64) string {
	var pts []string
	for k := 0; k < 8; k++ {
		conc := 1e-9 * math.Pow(10, 0.5*float64(k))
		for _, e := range []float64{1, -1} {
			pts = append(pts, fmt.Sprintf(`{"conc":%g,"response":%g}`, conc, f(conc)+e*float64(1+k%3)))
		}
	}
	return `{"conc_unit":"M","points":[` + strings.Join(pts, ",") + `]}`
}

// On both engines: a flat curve is stored as inactive with null potencies
// (never a 5xx for its missing log_ec50), reads back the same, and plots
// without a curve; a falling curve carries ic50 and pic50 beside ec50 and
// pec50.
func TestActivityOverHTTP(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		w := ts.do("POST", "/v1/fits", ScopeSubmit, curveBody(func(float64) float64 { return 40 }))
		if w.Code != http.StatusCreated {
			t.Fatalf("flat curve: %d %s", w.Code, w.Body)
		}
		var raw map[string]json.RawMessage
		if err := json.Unmarshal(w.Body.Bytes(), &raw); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"pec50", "qualifier", "ic50", "pic50"} {
			if string(raw[k]) != "null" {
				t.Errorf("inactive curve: %s = %s, want null", k, raw[k])
			}
		}
		var got wire.StoredFit
		if err := json.Unmarshal(w.Body.Bytes(), &got); err != nil {
			t.Fatal(err)
		}
		if got.Activity != "inactive" || got.Reason == "" || !math.IsNaN(float64(got.EC50.Estimate)) ||
			!math.IsNaN(float64(got.Params[2].Param.Estimate)) || got.Params[2].Name != "log_ec50" {
			t.Errorf("flat curve: activity %q (%q), ec50 %v, %s %v", got.Activity, got.Reason, got.EC50.Estimate, got.Params[2].Name, got.Params[2].Param.Estimate)
		}
		r := ts.do("GET", "/v1/fits/"+got.ID, ScopeRead, "")
		var back wire.StoredFit
		if err := json.Unmarshal(r.Body.Bytes(), &back); err != nil || back.Activity != "inactive" {
			t.Errorf("read back: %v, activity %q", err, back.Activity)
		}
		p := ts.do("GET", "/v1/fits/"+got.ID+"/plot.svg", ScopeRead, "")
		if p.Code != http.StatusOK || strings.Contains(p.Body.String(), "NaN") {
			t.Errorf("plot of an inactive curve: %d, NaN in it: %v", p.Code, strings.Contains(p.Body.String(), "NaN"))
		}

		w = ts.do("POST", "/v1/fits", ScopeSubmit, curveBody(func(c float64) float64 { return 100 / (1 + c/1e-7) }))
		if w.Code != http.StatusCreated {
			t.Fatalf("falling curve: %d %s", w.Code, w.Body)
		}
		var fall wire.StoredFit
		if err := json.Unmarshal(w.Body.Bytes(), &fall); err != nil {
			t.Fatal(err)
		}
		if fall.Activity != "active" || fall.Direction == nil || *fall.Direction != "falling" || fall.IC50 == nil ||
			fall.IC50.Estimate != fall.EC50.Estimate || fall.PIC50 != fall.PEC50 || fall.Qualifier == nil || *fall.Qualifier != "=" {
			t.Errorf("falling curve: activity %q, direction %v, ic50 %+v, pic50 %v, qualifier %v", fall.Activity, fall.Direction, fall.IC50, fall.PIC50, fall.Qualifier)
		}
		if math.Abs(float64(fall.PIC50)-7) > 0.1 || math.Abs(float64(fall.PlateauZero)-100) > 5 {
			t.Errorf("falling curve: pIC50 %v (want about 7), plateau_zero %v (want about 100)", fall.PIC50, fall.PlateauZero)
		}
	})
}

// The activity settings are checked before anything is fitted or stored,
// with a problem pointing at the field.
func TestActivitySettingsRefused(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	pts := curveBody(func(float64) float64 { return 40 })
	for _, c := range []struct{ field, value string }{{"activity_alpha", "0.6"}, {"window", "-1"}, {"min_effect", "2"}} {
		body := strings.Replace(pts, `{"conc_unit"`, `{"`+c.field+`":`+c.value+`,"conc_unit"`, 1)
		w := ts.do("POST", "/v1/fits", ScopeSubmit, body)
		if w.Code != http.StatusUnprocessableEntity || !strings.Contains(w.Body.String(), `"/`+c.field+`"`) {
			t.Errorf("%s = %s: %d %s, want 422 pointing at /%s", c.field, c.value, w.Code, w.Body, c.field)
		}
	}
	if l := ts.do("GET", "/v1/fits", ScopeRead, ""); strings.Contains(l.Body.String(), `"id"`) {
		t.Errorf("a refused fit was stored: %s", l.Body)
	}
}
