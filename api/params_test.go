package api

import (
	"encoding/json"
	"slices"
	"strings"
	"testing"

	"sluice/db/dbtest"
)

// TestUnknownQueryParameters walks every route: a parameter the route does
// not take is a 400 problem naming it (GET /v1/fits?compound=X used to
// return every fit), and the parameters a route does take are never refused
// as unknown.
func TestUnknownQueryParameters(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	routes := ts.srv.engine.Routes()
	if len(routes) < 20 {
		t.Fatalf("only %d routes", len(routes))
	}
	for _, rt := range routes {
		if !apiPath(rt.Path) {
			continue // the dashboard's pages read only what they know
		}
		path := strings.ReplaceAll(rt.Path, ":id", "1")
		w := ts.do(rt.Method, path+"?compund_id=X", ScopeAdmin, "")
		p := problemOf(t, w)
		if w.Code != 400 || len(p.Errors) != 1 || p.Errors[0].Parameter != "compund_id" {
			t.Errorf("%s %s?compund_id=X: %d %+v, want 400 naming compund_id", rt.Method, rt.Path, w.Code, p)
		}
		for _, name := range queryParams[rt.Method+" "+rt.Path] {
			w := ts.do(rt.Method, path+"?"+name+"=1", ScopeAdmin, "")
			if w.Code == 400 && strings.Contains(w.Body.String(), "unknown parameter") {
				t.Errorf("%s %s?%s: refused as unknown", rt.Method, rt.Path, name)
			}
		}
	}
	// Every listed route exists.
	for key := range queryParams {
		found := false
		for _, rt := range routes {
			found = found || rt.Method+" "+rt.Path == key
		}
		if !found {
			t.Errorf("queryParams lists %s, which is no route", key)
		}
	}
	// The filters themselves still work.
	if w := ts.do("GET", "/v1/fits?compound_id=X&limit=5", ScopeRead, ""); w.Code != 200 {
		t.Errorf("GET /v1/fits?compound_id=X&limit=5: %d %s", w.Code, w.Body)
	}
}

// The query parameters the OpenAPI document gives each route are the ones
// the route takes (queryParams), no more and no fewer.
func TestQueryParamsDocumented(t *testing.T) {
	var doc struct {
		Paths map[string]map[string]json.RawMessage `json:"paths"`
	}
	if err := json.Unmarshal(openAPIDoc, &doc); err != nil {
		t.Fatal(err)
	}
	documented := map[string][]string{}
	for path, ops := range doc.Paths {
		for method, raw := range ops {
			var op struct {
				Parameters []struct {
					Name string `json:"name"`
					In   string `json:"in"`
				} `json:"parameters"`
			}
			if err := json.Unmarshal(raw, &op); err != nil {
				continue // not an operation
			}
			key := strings.ToUpper(method) + " " + strings.ReplaceAll(path, "{id}", ":id")
			for _, p := range op.Parameters {
				if p.In == "query" {
					documented[key] = append(documented[key], p.Name)
				}
			}
		}
	}
	routes := map[string]bool{}
	for k := range documented {
		routes[k] = true
	}
	for k := range queryParams {
		routes[k] = true
	}
	for k := range routes {
		got, want := slices.Sorted(slices.Values(documented[k])), slices.Sorted(slices.Values(queryParams[k]))
		if !slices.Equal(got, want) {
			t.Errorf("%s: documented %v, takes %v", k, got, want)
		}
	}
}

// Every operation documents the 400 of an unknown query parameter, and
// every POST the 409 of a reused Idempotency-Key.
func TestProblemsDocumented(t *testing.T) {
	var doc struct {
		Paths map[string]map[string]json.RawMessage `json:"paths"`
	}
	if err := json.Unmarshal(openAPIDoc, &doc); err != nil {
		t.Fatal(err)
	}
	for path, ops := range doc.Paths {
		for method, raw := range ops {
			var op struct {
				Responses map[string]json.RawMessage `json:"responses"`
			}
			if err := json.Unmarshal(raw, &op); err != nil || op.Responses == nil {
				continue
			}
			if op.Responses["400"] == nil {
				t.Errorf("%s %s: no 400", method, path)
			}
			if method == "post" && op.Responses["409"] == nil {
				t.Errorf("%s %s: no 409", method, path)
			}
		}
	}
}
