package api

import (
	"context"
	"encoding/json"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// A refit whose work (the curve's stored B = 200 bootstrap) is over the
// synchronous budget is queued: 202 with the analysis' Location, the job
// stores the new version, and the analysis' result is the reply a
// synchronous refit gives (the curve as GET /v1/curves/{id} shows it).
// Bad exclusions are still refused at once, with nothing queued.
func TestQueuedRefitOverHTTP(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		id := storeFit(t, ts, `,"bootstrap":{"resamples":200,"seed":7}`)
		// A second server on the same store whose synchronous budget
		// (10 000 units) is below the refit's bootstrap.
		srv, err := New(Config{AuthDisabled: true}, Deps{Store: store, Budget: service.Budget{Sync: 10_000}})
		if err != nil {
			t.Fatal(err)
		}
		ctx := context.Background()
		if err := store.StartHandlers(ctx, db.Handlers{Plate: srv.Service().RunPlateJob, Analysis: srv.Service().RunAnalysis}, 1); err != nil {
			t.Fatal(err)
		}
		t.Cleanup(func() { store.StopWorkers(context.Background()) })
		do := func(method, path, body string) *httptest.ResponseRecorder {
			req := httptest.NewRequest(method, path, strings.NewReader(body))
			w := httptest.NewRecorder()
			srv.Handler().ServeHTTP(w, req)
			return w
		}
		if w := do("POST", "/v1/curves/"+id+"/refit", `{"exclude":[99],"reason":"x"}`); w.Code != 422 {
			t.Errorf("a bad exclusion over the budget: %d %s, want 422 at once", w.Code, w.Body)
		}
		w := do("POST", "/v1/curves/"+id+"/refit", `{"exclude":[3, 10],"reason":"outliers"}`)
		var q wire.AnalysisQueued
		if err := json.Unmarshal(w.Body.Bytes(), &q); err != nil || w.Code != 202 || w.Header().Get("Location") != "/v1/analyses/"+q.AnalysisID {
			t.Fatalf("refit over the budget: %d %s, want 202", w.Code, w.Body)
		}
		deadline := time.Now().Add(30 * time.Second)
		var a wire.Analysis
		for a.Status != "done" {
			if time.Now().After(deadline) {
				t.Fatalf("analysis still %q", a.Status)
			}
			time.Sleep(20 * time.Millisecond)
			g := do("GET", "/v1/analyses/"+q.AnalysisID, "")
			if err := json.Unmarshal(g.Body.Bytes(), &a); err != nil || g.Code != 200 || a.Status == "failed" {
				t.Fatalf("%d %s", g.Code, g.Body)
			}
		}
		if a.Kind != "refit" || !strings.HasPrefix(a.Location, "/v1/curves/") {
			t.Fatalf("analysis %+v", a)
		}
		var refit struct {
			RefitOf    string `json:"refit_of"`
			Exclusions []int  `json:"exclusions"`
		}
		if err := json.Unmarshal(a.Result, &refit); err != nil || refit.RefitOf != id || len(refit.Exclusions) != 2 ||
			refit.Exclusions[0] != 3 || refit.Exclusions[1] != 10 {
			t.Errorf("queued refit result %s (%v)", a.Result, err)
		}
		if f := do("GET", a.Location, ""); f.Code != 200 || f.Body.String() != string(a.Result) {
			t.Errorf("the stored curve %s differs from the analysis' result:\n%s\n%s", a.Location, f.Body, a.Result)
		}
		if r := do("GET", "/v1/analyses/"+q.AnalysisID+"/result", ""); r.Code != 201 {
			t.Errorf("the analysis' reply is %d, want the synchronous refit's 201", r.Code)
		}
		var old struct {
			Superseded bool `json:"superseded"`
		}
		getJSON(t, ts, "/v1/curves/"+id, &old)
		if !old.Superseded {
			t.Error("the refitted curve is not marked superseded")
		}
	})
}
