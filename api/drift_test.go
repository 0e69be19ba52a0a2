package api

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/db/dbtest"
)

// driftPlateBody is a 96-well plate of assay A, measured on day day, whose
// min controls average minMean.
func driftPlateBody(day int, minMean float64) string {
	wells := []string{`{"well":"A1","role":"max_control","value":1000}`, `{"well":"B1","role":"max_control","value":990}`,
		fmt.Sprintf(`{"well":"A12","role":"min_control","value":%g}`, minMean-1), fmt.Sprintf(`{"well":"B12","role":"min_control","value":%g}`, minMean+1)}
	for k := 0; k < 8; k++ {
		c := 1e-9 * float64(int(1)<<k)
		wells = append(wells, fmt.Sprintf(`{"well":"C%d","role":"reference","compound_id":"REF","conc":%g,"value":%g}`, k+2, c, 10+990*c/(c+1e-8)))
	}
	return fmt.Sprintf(`{"conc_unit":"M","barcode":"D%03d","format":96,"assay_id":"A","measured_at":"2026-03-%02dT09:00:00Z","wells":[%s]}`,
		day, 1+day%28, strings.Join(wells, ","))
}

// The drift routes over HTTP: a chart with the shape, the
// overview, the baseline PUT (admin only, keyed by its path too), the
// rules calculator, problems that point at the field, and the metrics
// that alerts watch.
func TestDriftRoutes(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"A","name":"drift"}`); w.Code != 201 {
		t.Fatalf("assay: %d %s", w.Code, w.Body)
	}
	mins := []float64{10, 11, 9, 10.5, 9.5, 10, 11, 9, 10.2, 9.8, 10.4, 9.6, 10, 11, 9, 10.5, 9.5, 10, 10.7, 9.3, 14}
	for i, m := range mins {
		w := ts.do("POST", "/v1/plates", ScopeSubmit, driftPlateBody(i, m))
		var acc struct {
			PlateID string `json:"plate_id"`
		}
		if w.Code != 202 || json.Unmarshal(w.Body.Bytes(), &acc) != nil {
			t.Fatalf("plate %d: %d %s", i, w.Code, w.Body)
		}
		if err := ts.srv.svc.RunPlateJob(context.Background(), acc.PlateID); err != nil {
			t.Fatal(err)
		}
	}
	w := ts.do("GET", "/v1/assays/A/drift?metric=min_control_mean", ScopeRead, "")
	var raw map[string]json.RawMessage
	if w.Code != 200 || json.Unmarshal(w.Body.Bytes(), &raw) != nil {
		t.Fatalf("chart: %d %s", w.Code, w.Body)
	}
	for _, k := range []string{"assay_id", "metric", "baseline", "status", "points"} {
		if raw[k] == nil {
			t.Errorf("chart has no %q", k)
		}
	}
	var ch wire.DriftChart
	json.Unmarshal(w.Body.Bytes(), &ch)
	if ch.Status != "out_of_control" || len(ch.Points) != len(mins) || ch.Baseline.Source != "auto" {
		t.Errorf("chart %s: %d points, baseline %+v", ch.Status, len(ch.Points), ch.Baseline)
	}
	var pt map[string]json.RawMessage
	json.Unmarshal(mustJSON(t, ch.Points[20]), &pt)
	for _, k := range []string{"plate_id", "barcode", "measured_at", "value", "z", "ewma", "ewma_limits", "cusum_hi", "cusum_lo", "violations"} {
		if pt[k] == nil {
			t.Errorf("point has no %q", k)
		}
	}
	// z ≈ 5.7: beyond 3 SD, and enough alone to push EWMA and CUSUM out.
	if fmt.Sprint(ch.Points[20].Violations) != "[1-2s 1-3s ewma cusum]" {
		t.Errorf("last point's violations %v", ch.Points[20].Violations)
	}
	// The reference compound's pEC50 is charted (its EC50 is 10 nM).
	w = ts.do("GET", "/v1/assays/A/drift?metric=reference_pec50", ScopeRead, "")
	json.Unmarshal(w.Body.Bytes(), &ch)
	if w.Code != 200 || len(ch.Points) != len(mins) || float64(ch.Points[0].Value) < 7.99 || float64(ch.Points[0].Value) > 8.01 {
		t.Errorf("reference_pec50: %d %s", w.Code, w.Body.String()[:min(300, w.Body.Len())])
	}

	w = ts.do("GET", "/v1/assays/A/drift.svg?metric=min_control_mean", ScopeRead, "")
	if svg := w.Body.String(); w.Code != 200 || w.Header().Get("Content-Type") != "image/svg+xml" || !strings.Contains(svg, "D020 2026-03-21: 1-2s, 1-3s") ||
		!strings.Contains(svg, "+3 SD") || !strings.Contains(svg, "EWMA") {
		t.Errorf("drift.svg: %d %.300s", w.Code, svg)
	}
	if w := ts.do("GET", "/v1/assays/A/drift.svg", ScopeRead, ""); w.Code != 400 {
		t.Errorf("drift.svg without a metric: %d", w.Code)
	}

	w = ts.do("GET", "/v1/drift", ScopeRead, "")
	var o wire.DriftOverview
	if w.Code != 200 || json.Unmarshal(w.Body.Bytes(), &o) != nil || len(o.Charts) != 8 {
		t.Fatalf("overview: %d %s", w.Code, w.Body)
	}
	for _, c := range o.Charts {
		if c.Metric == "min_control_mean" && (c.Status != "out_of_control" || c.LatestViolation == nil) {
			t.Errorf("overview of min_control_mean %+v", c)
		}
	}

	m := ts.do("GET", "/metrics", "", "").Body.String()
	for _, want := range []string{
		`sluice_drift_violations_total{assay_id="A",metric="min_control_mean",rule="1-3s"} 1`,
		`sluice_assay_out_of_control{assay_id="A"} 1`,
	} {
		if !strings.Contains(m, want) {
			t.Errorf("/metrics lacks %s", want)
		}
	}

	// Baselines: admin only; the key covers the path.
	body := `{"mean":10,"sd":3}`
	if w := ts.do("PUT", "/v1/assays/A/baselines/min_control_mean", ScopeSubmit, body); w.Code != 403 {
		t.Errorf("PUT with scope submit: %d", w.Code)
	}
	a := ts.do("PUT", "/v1/assays/A/baselines/min_control_mean", ScopeAdmin, body, "Idempotency-Key", "b1")
	b := ts.do("PUT", "/v1/assays/A/baselines/min_control_mean", ScopeAdmin, body, "Idempotency-Key", "b1")
	c := ts.do("PUT", "/v1/assays/A/baselines/max_control_mean", ScopeAdmin, body, "Idempotency-Key", "b1")
	if a.Code != 200 || b.Header().Get("Idempotency-Replayed") != "true" || b.Body.String() != a.Body.String() || c.Code != 409 {
		t.Errorf("PUT baseline %d, replay %d %q, other metric under the key %d", a.Code, b.Code, b.Header().Get("Idempotency-Replayed"), c.Code)
	}
	json.Unmarshal(a.Body.Bytes(), &ch)
	if ch.Status != "in_control" || ch.Baseline.Source != "explicit" {
		t.Errorf("after PUT: %s %+v", ch.Status, ch.Baseline)
	}

	for _, tc := range []struct {
		method, path, scope, body string
		code                      int
		pointer, param            string
	}{
		{"GET", "/v1/assays/A/drift", ScopeRead, "", 400, "", "metric"},
		{"GET", "/v1/assays/A/drift?metric=zprime", ScopeRead, "", 400, "", "metric"},
		{"GET", "/v1/assays/A/drift?metric=z_prime&from=yesterday", ScopeRead, "", 400, "", "from"},
		{"GET", "/v1/assays/NOPE/drift?metric=z_prime", ScopeRead, "", 404, "", ""},
		{"PUT", "/v1/assays/A/baselines/z_prime", ScopeAdmin, `{"mean":0.7}`, 422, "/sd", ""},
		{"PUT", "/v1/assays/A/baselines/z_prime", ScopeAdmin, `{"plates":["x","y"]}`, 422, "/plates/0", ""},
		{"PUT", "/v1/assays/A/baselines/r4s", ScopeAdmin, `{"auto":true}`, 400, "", "metric"},
		{"PUT", "/v1/assays/NOPE/baselines/z_prime", ScopeAdmin, `{"auto":true}`, 404, "", ""},
		{"POST", "/v1/qc/rules", ScopeRead, `{"points":[{"value":1},{"value":2}]}`, 422, "/baseline_runs", ""},
		{"POST", "/v1/qc/rules", ScopeRead, `{"baseline":{"mean":1,"sd":0},"points":[{"value":1}]}`, 422, "/baseline/sd", ""},
		{"POST", "/v1/qc/rules", ScopeRead, `{"baseline":{"mean":1,"sd":1},"points":[{"value":1},{}]}`, 422, "/points/1/value", ""},
		{"POST", "/v1/qc/rules", ScopeRead, `{"baseline":{"mean":1,"sd":1},"points":[{"value":1}],"ewma_lambda":2}`, 422, "/ewma_lambda", ""},
		{"POST", "/v1/qc/rules", ScopeRead, `{"baseline":{"mean":1,"sd":1},"points":[{"value":1}],"rules":["2-3s"]}`, 422, "/rules/0", ""},
		{"POST", "/v1/qc/rules", ScopeRead, `{"baseline":{"mean":1,"sd":1},"points":[{"value":1,"time":"2026-01-02T00:00:00Z"},{"value":1,"time":"2026-01-01T00:00:00Z"}]}`, 422, "/points/1/time", ""},
	} {
		w := ts.do(tc.method, tc.path, tc.scope, tc.body)
		p := problemOf(t, w)
		if w.Code != tc.code || (tc.pointer != "" || tc.param != "") && (len(p.Errors) != 1 || p.Errors[0].Pointer != tc.pointer || p.Errors[0].Parameter != tc.param) {
			t.Errorf("%s %s %s: %d %+v, want %d at %q%q", tc.method, tc.path, tc.body, w.Code, p, tc.code, tc.pointer, tc.param)
		}
	}

	// The calculator, checked by hand: z = 0, 3.5, 2.25, −2.25. Point 2 is
	// 1-3s; point 3 is 2-2s, and its EWMA 102.02 is above the limit
	// 100 + 3·2·√(0.2/1.8·(1 − 0.8⁶)) = 101.72; point 4 is below −2 SD
	// in the group whose other value is above +2 SD: R-4s.
	w = ts.do("POST", "/v1/qc/rules", ScopeRead, `{"baseline":{"mean":100,"sd":2},"points":[{"value":100,"group":"r1"},{"value":107,"group":"r1"},{"value":104.5,"group":"r2"},{"value":95.5,"group":"r2"}]}`)
	var qr wire.QCRulesResponse
	if w.Code != 200 || json.Unmarshal(w.Body.Bytes(), &qr) != nil {
		t.Fatalf("qc rules: %d %s", w.Code, w.Body)
	}
	got := []string{}
	for _, p := range qr.Points {
		got = append(got, fmt.Sprint(p.Violations))
	}
	if fmt.Sprint(got) != "[[] [1-2s 1-3s] [1-2s 2-2s ewma] [1-2s R-4s]]" || qr.Status != "out_of_control" {
		t.Errorf("qc rules: %v %s", got, qr.Status)
	}
}

func mustJSON(t *testing.T, v any) []byte {
	b, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
