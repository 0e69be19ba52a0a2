package api

import (
	"context"
	"fmt"
	"net/http/httptest"
	"regexp"
	"slices"
	"strings"
	"testing"

	"sluice/api/service"
	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/drift"
)

// Made-up methods and paths, sent without a token, do not grow /metrics:
// the method label takes a fixed set of values and the route label is the
// route's template ("unmatched" for none), never the raw path.
func TestMetricsCardinalityBounded(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	send := func(n int) {
		for i := range n {
			for _, m := range []string{fmt.Sprintf("M%06d", i), "GET", "PROPFIND"} {
				r := httptest.NewRequest("GET", "/", nil)
				r.Method = m
				r.URL.Path = fmt.Sprintf("/v1/no/such/%d", i)
				if i%2 == 0 {
					r.URL.Path = fmt.Sprintf("/v1/fits/%d", i) // a real route, any id
				}
				ts.srv.Handler().ServeHTTP(httptest.NewRecorder(), r)
			}
		}
	}
	series := func() int {
		fams, err := ts.reg.Gather()
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, f := range fams {
			if strings.HasPrefix(f.GetName(), "sluice_http_") {
				n += len(f.GetMetric())
			}
		}
		return n
	}
	send(50)
	before := series()
	send(2000)
	if after := series(); after != before {
		t.Errorf("HTTP series grew from %d to %d with 6000 more odd requests", before, after)
	}
	if before > 20 {
		t.Errorf("%d HTTP series from three methods on two routes", before)
	}
}

// Every label of every metric takes values from a bounded set, checked
// after traffic of every kind: a new label must be added here with its set.
func TestMetricLabelsBounded(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"bootstrap":{"resamples":20,"seed":1}`))
	ts.do("GET", "/v1/fits/x", ScopeRead, "")
	ts.do("BREW", "/v1/fits", ScopeRead, "")
	ts.do("GET", "/nowhere/at/all", "", "")
	ts.do("GET", "/metrics", "", "")
	routes := map[string]bool{"unmatched": true}
	for _, r := range ts.srv.engine.Routes() {
		routes[r.Path] = true
	}
	models := map[string]bool{}
	for _, m := range fit.Builtin().Names() {
		models[string(m)] = true
	}
	code := regexp.MustCompile(`^[1-5][0-9][0-9]$`)
	allowed := map[string]func(string) bool{
		"route":  func(v string) bool { return routes[v] },
		"method": regexp.MustCompile(`^(GET|HEAD|POST|PUT|PATCH|DELETE|OPTIONS|CONNECT|TRACE|other)$`).MatchString,
		"code":   code.MatchString,
		"model":  func(v string) bool { return models[v] },
		"status": regexp.MustCompile(`^[a-z_]+$`).MatchString, // lm.Status strings
		"engine": func(v string) bool { return v == "sqlite" || v == "postgres" },
		"kind":   func(v string) bool { return v == db.JobPlateFit || v == db.JobAnalysis },
		"cause":  func(v string) bool { return v == causeUnavailable || v == causeInternal },
		// Drift: assays are created by hand (tens), metrics and rules are
		// fixed lists.
		"assay_id": func(v string) bool { _, err := ts.store.Assay(context.Background(), v); return err == nil },
		"metric":   func(v string) bool { return slices.Contains(service.DriftMetricNames(), v) },
		"rule":     func(v string) bool { _, err := drift.ParseRule(v); return err == nil },
	}
	fams, err := ts.reg.Gather()
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range fams {
		if !strings.HasPrefix(f.GetName(), "sluice_") {
			continue
		}
		for _, m := range f.GetMetric() {
			for _, l := range m.GetLabel() {
				ok := allowed[l.GetName()]
				switch {
				case ok == nil:
					t.Errorf("%s: label %q has no bounded set here", f.GetName(), l.GetName())
				case !ok(l.GetValue()):
					t.Errorf("%s: %s=%q is outside its set", f.GetName(), l.GetName(), l.GetValue())
				}
			}
		}
	}
}
