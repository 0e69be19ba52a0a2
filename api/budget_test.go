package api

import (
	"context"
	"encoding/json"
	"fmt"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// A request over the hard work limit is a 422 naming the field that drives
// its cost, answered before any fitting (2 000 levels with B = 100 000 is
// about 6.5e9 units, hours of CPU).
func TestTooMuchWork(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	var pts []string
	for i := range 2000 {
		pts = append(pts, fmt.Sprintf(`{"conc":%d,"response":%d}`, i+1, i%7))
	}
	w := ts.do("POST", "/v1/fits", ScopeSubmit, `{"conc_unit":"M","points":[`+strings.Join(pts, ",")+`],"bootstrap":{"resamples":100000}}`)
	p := problemOf(t, w)
	if w.Code != 422 || len(p.Errors) != 1 || p.Errors[0].Pointer != "/bootstrap/resamples" {
		t.Errorf("%d %+v", w.Code, p)
	}
	if n := ts.runs(); n != 0 {
		t.Errorf("%d runs stored", n)
	}
}

// Over the synchronous budget a fit is queued (202 with where to look);
// the analysis job fits and stores it, and GET /v1/analyses/{id} then
// gives the result (both engines).
func TestQueuedFitOverHTTP(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
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
		w := do("POST", "/v1/fits", dnaseBody(t, `,"bootstrap":{"resamples":100,"seed":2}`))
		var q wire.AnalysisQueued
		if err := json.Unmarshal(w.Body.Bytes(), &q); err != nil || w.Code != 202 || w.Header().Get("Location") != "/v1/analyses/"+q.AnalysisID {
			t.Fatalf("%d %s", w.Code, w.Body)
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
		f := do("GET", a.Location, "")
		if f.Code != 200 || f.Body.String() != string(a.Result) {
			t.Errorf("the stored fit %s differs from the analysis' result", a.Location)
		}
	})
}
