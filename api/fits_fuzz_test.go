package api

import (
	"net/http/httptest"
	"strings"
	"testing"

	"sluice/db/dbtest"
)

// FuzzFitRequest: any body sent to POST /v1/fits (store: false, so nothing
// accumulates) is answered with 200 or a 4xx problem, never a 5xx.
func FuzzFitRequest(f *testing.F) {
	f.Add(`{"model":"hill","conc_unit":"M","points":[{"conc":0,"response":1},{"conc":1e-9,"response":5},{"conc":1e-8,"response":30},{"conc":1e-7,"response":70},{"conc":1e-6,"response":95}],"store":false}`)
	f.Add(`{"model":"bell","conc_unit":"nM","fixed":{"bottom":0},"points":[{"conc":1,"response":1}],"store":false}`)
	f.Add(`{"conc_unit":"M","points":[{"conc":1e308,"response":-1e308},{"conc":0,"response":0}],"bootstrap":{"resamples":3},"store":false}`)
	ts := newTestServer(f, dbtest.SQLite(f))
	f.Fuzz(func(t *testing.T, body string) {
		req := httptest.NewRequest("POST", "/v1/fits", strings.NewReader(body))
		req.Header.Set("Content-Type", "application/json")
		req.Header.Set("Authorization", "Bearer "+ts.tokens[ScopeSubmit])
		w := httptest.NewRecorder()
		ts.srv.Handler().ServeHTTP(w, req)
		if w.Code >= 500 {
			t.Fatalf("%d for %q: %s", w.Code, body, w.Body)
		}
		if w.Code >= 400 && w.Header().Get("Content-Type") != "application/problem+json" {
			t.Fatalf("%d without a problem body for %q", w.Code, body)
		}
	})
}
