package api

import (
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus/testutil"

	"sluice/db/dbtest"
)

func TestMetrics(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	if w := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"bootstrap":{"resamples":100,"seed":1}`)); w.Code != 201 {
		t.Fatalf("%d %s", w.Code, w.Body)
	}
	ts.do("GET", "/v1/fits/x", ScopeRead, "")
	want := `
# HELP sluice_fits_total Curves fitted, by model and status.
# TYPE sluice_fits_total counter
sluice_fits_total{model="hill",status="converged"} 1
# HELP sluice_bootstrap_resamples_total Bootstrap resamples refitted.
# TYPE sluice_bootstrap_resamples_total counter
sluice_bootstrap_resamples_total 100
`
	if err := testutil.GatherAndCompare(ts.reg, strings.NewReader(want), "sluice_fits_total", "sluice_bootstrap_resamples_total"); err != nil {
		t.Error(err)
	}
	if n := testutil.ToFloat64(ts.srv.metrics.requests.WithLabelValues("/v1/fits/:id", "GET", "404")); n != 1 {
		t.Errorf("404s on /v1/fits/:id counted %v, want 1", n)
	}
	if n := testutil.CollectAndCount(ts.srv.metrics.duration); n == 0 {
		t.Error("no request durations")
	}
	problems, err := testutil.GatherAndLint(ts.reg)
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range problems {
		if strings.HasPrefix(p.Metric, "sluice_") {
			t.Errorf("lint: %s: %s", p.Metric, p.Text)
		}
	}
	w := ts.do("GET", "/metrics", "", "")
	for _, name := range []string{"sluice_db_connections_open", "sluice_http_request_duration_seconds_bucket", "go_goroutines"} {
		if !strings.Contains(w.Body.String(), name) {
			t.Errorf("/metrics lacks %s", name)
		}
	}
}
