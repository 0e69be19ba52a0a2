package api

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"
)

// storeFit posts a fit (DNase run 1 with extra fields) and returns its id.
func storeFit(t *testing.T, ts *testServer, extra string) string {
	t.Helper()
	w := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, extra))
	if w.Code != 201 {
		t.Fatalf("store fit: %d %s", w.Code, w.Body)
	}
	var out struct {
		ID string `json:"id"`
	}
	if err := json.Unmarshal(w.Body.Bytes(), &out); err != nil {
		t.Fatal(err)
	}
	return out.ID
}

// potencyWalkRoutes are the potency history's POST routes for the
// idempotency walk: review and refit of a stored fit, and an MSR study of
// curve pairs.
func potencyWalkRoutes(t *testing.T, setups map[string]func(*testing.T, *testServer) string) []walkRoute {
	var pairs []string
	setups["/v1/curves/{id}/review"] = func(t *testing.T, ts *testServer) string {
		return "/v1/curves/" + storeFit(t, ts, "") + "/review"
	}
	setups["/v1/curves/{id}/refit"] = func(t *testing.T, ts *testServer) string {
		return "/v1/curves/" + storeFit(t, ts, "") + "/refit"
	}
	setups["/v1/msr-studies"] = func(t *testing.T, ts *testServer) string {
		if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"WALK-A","name":"walk"}`); w.Code != 201 {
			t.Fatalf("assay: %d %s", w.Code, w.Body)
		}
		for k := range 3 {
			c := fmt.Sprintf("WALK-C%d", k)
			if w := ts.do("POST", "/v1/compounds", ScopeSubmit, `{"id":"`+c+`","name":"walk"}`); w.Code != 201 {
				t.Fatalf("compound: %d %s", w.Code, w.Body)
			}
			extra := `,"assay_id":"WALK-A","compound_id":"` + c + `"`
			a, b := storeFit(t, ts, extra), storeFit(t, ts, extra+`,"labels":{"run":"2"}`)
			pairs = append(pairs, fmt.Sprintf(`{"run1":%q,"run2":%q}`, a, b))
		}
		return "/v1/msr-studies"
	}
	return []walkRoute{
		{"/v1/curves/{id}/review", ScopeSubmit, func(i int) string {
			return fmt.Sprintf(`{"decision":"rejected","reason":"walk %d"}`, i)
		}, audited("curve.review")},
		{"/v1/curves/{id}/refit", ScopeSubmit, func(i int) string {
			return fmt.Sprintf(`{"exclude":[%d],"reason":"walk"}`, i)
		}, audited("curve.refit")},
		{"/v1/msr-studies", ScopeSubmit, func(i int) string {
			// Another order of the same pairs is another request.
			ps := append(append([]string{}, pairs[i:]...), pairs[:i]...)
			return `{"assay_id":"WALK-A","pairs":[` + strings.Join(ps, ",") + `]}`
		}, audited("msr_study.create")},
	}
}
