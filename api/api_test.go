package api

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/http/httptest"
	"os"
	"strings"
	"testing"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

func init() { gin.SetMode(gin.TestMode) }

type testServer struct {
	t      testing.TB
	srv    *Server
	store  db.Store
	reg    *prometheus.Registry
	tokens map[string]string // scope → secret
}

func newTestServer(t testing.TB, store db.Store) *testServer {
	t.Helper()
	reg := prometheus.NewRegistry()
	srv, err := New(Config{BodyLimit: 1 << 20}, Deps{Store: store, Registry: reg})
	if err != nil {
		t.Fatal(err)
	}
	ts := &testServer{t: t, srv: srv, store: store, reg: reg, tokens: map[string]string{}}
	ctx := context.Background()
	for _, scope := range []string{ScopeRead, ScopeSubmit, ScopeAdmin} {
		secret, hash := NewToken()
		ts.tokens[scope] = secret
		err := store.Write(ctx, func(w db.Writer) error {
			return w.InsertToken(ctx, &db.Token{ID: scope, Name: "test-" + scope, Scope: scope, Hash: hash, CreatedAt: srv.now()})
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	return ts
}

// do sends a request with the token of the given scope ("" for none).
func (ts *testServer) do(method, path, scope string, body string, hdr ...string) *httptest.ResponseRecorder {
	ts.t.Helper()
	var r io.Reader
	if body != "" {
		r = strings.NewReader(body)
	}
	req := httptest.NewRequest(method, path, r)
	if body != "" {
		req.Header.Set("Content-Type", "application/json")
	}
	if scope != "" {
		req.Header.Set("Authorization", "Bearer "+ts.tokens[scope])
	}
	for i := 0; i+1 < len(hdr); i += 2 {
		req.Header.Set(hdr[i], hdr[i+1])
	}
	w := httptest.NewRecorder()
	ts.srv.Handler().ServeHTTP(w, req)
	return w
}

func (ts *testServer) runs() int {
	runs, _, err := ts.store.FitRuns(context.Background(), db.FitFilter{Limit: 1000})
	if err != nil {
		ts.t.Fatal(err)
	}
	return len(runs)
}

// dnaseBody is R's DNase run 1 (testdata/r-datasets/DNase.csv) as a fit
// request.
func dnaseBody(t testing.TB, extra string) string {
	f, err := os.Open("../testdata/r-datasets/DNase.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, _ := csv.NewReader(f).ReadAll()
	var pts []string
	for _, r := range recs[1:] {
		if r[0] == "1" {
			pts = append(pts, fmt.Sprintf(`{"conc":%s,"response":%s}`, r[1], r[2]))
		}
	}
	return `{"model":"hill","conc_unit":"M","points":[` + strings.Join(pts, ",") + `]` + extra + `}`
}

// The whole path on both engines: fit DNase run 1 over HTTP, get back R's
// exact optimum (high-precision-reference.json, lec50 0.65465677225479288072,
// relative 1e-6), read it back, list it, plot it.
func TestFitLifecycle(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		w := ts.do("POST", "/v1/compounds", ScopeSubmit, `{"id":"DNase-1","name":"DNase run 1"}`)
		if w.Code != http.StatusCreated {
			t.Fatalf("create compound: %d %s", w.Code, w.Body)
		}
		w = ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"compound_id":"DNase-1","labels":{"plate":"P1"},"bootstrap":{"resamples":200,"seed":9}`))
		if w.Code != http.StatusCreated {
			t.Fatalf("POST /v1/fits: %d %s", w.Code, w.Body)
		}
		var got wire.StoredFit
		if err := json.Unmarshal(w.Body.Bytes(), &got); err != nil {
			t.Fatal(err)
		}
		if got.ID == "" || got.CreatedAt == "" || got.SubmittedBy != "test-submit" || got.CompoundID != "DNase-1" ||
			got.Labels["plate"] != "P1" || len(got.InputSHA256) != 64 || got.Caution == "" {
			t.Errorf("provenance: %+v", got)
		}
		if w.Header().Get("Location") != "/v1/fits/"+got.ID {
			t.Errorf("Location %q", w.Header().Get("Location"))
		}
		var lec50 float64
		for _, p := range got.Params {
			if p.Name == "log_ec50" {
				lec50 = float64(p.Estimate)
			}
		}
		if math.Abs(lec50-0.65465677225479288072)/0.6546 > 1e-6 {
			t.Errorf("log_ec50 = %v", lec50)
		}
		if got.Bootstrap == nil || got.Bootstrap.Seed != 9 || got.Bootstrap.Resamples != 200 {
			t.Errorf("bootstrap %+v", got.Bootstrap)
		}
		r := ts.do("GET", "/v1/fits/"+got.ID, ScopeRead, "")
		if r.Code != 200 || !bytes.Equal(r.Body.Bytes(), w.Body.Bytes()) {
			t.Errorf("GET returns %d, a different body:\n%s\nvs\n%s", r.Code, r.Body, w.Body)
		}
		l := ts.do("GET", "/v1/fits?compound_id=DNase-1&limit=10", ScopeRead, "")
		var list wire.FitList
		json.Unmarshal(l.Body.Bytes(), &list)
		if l.Code != 200 || len(list.Fits) != 1 || list.Caution == "" {
			t.Errorf("list: %d %s", l.Code, l.Body)
		}
		p := ts.do("GET", "/v1/fits/"+got.ID+"/plot.svg", ScopeRead, "")
		if p.Code != 200 || p.Header().Get("Content-Type") != "image/svg+xml" ||
			!strings.Contains(p.Body.String(), "<polygon") || !strings.Contains(p.Body.String(), "research use only") {
			t.Errorf("plot: %d %s %.300s", p.Code, p.Header().Get("Content-Type"), p.Body)
		}
		if n := ts.do("GET", "/v1/fits/nope", ScopeRead, ""); n.Code != 404 || n.Header().Get("Content-Type") != "application/problem+json" {
			t.Errorf("missing fit: %d %s", n.Code, n.Header().Get("Content-Type"))
		}
		// The audit log has the fit.
		entries, _ := store.Audit(context.Background(), 10)
		if len(entries) < 2 || entries[0].Action != "fit.create" || entries[0].Target != got.ID {
			t.Errorf("audit %+v", entries)
		}
	})
}

func problemOf(t *testing.T, w *httptest.ResponseRecorder) Problem {
	t.Helper()
	if ct := w.Header().Get("Content-Type"); ct != "application/problem+json" {
		t.Errorf("Content-Type %q, want application/problem+json (%s)", ct, w.Body)
	}
	var p Problem
	if err := json.Unmarshal(w.Body.Bytes(), &p); err != nil {
		t.Fatalf("problem body: %v: %s", err, w.Body)
	}
	if p.Status != w.Code {
		t.Errorf("problem status %d, response %d", p.Status, w.Code)
	}
	return p
}

// Bad input gets a 4xx problem that points at the field, and nothing is
// stored.
func TestFitBadInput(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	six := `{"conc":1e-9,"response":1},{"conc":1e-8,"response":10},{"conc":1e-7,"response":50},{"conc":1e-6,"response":90},{"conc":1e-5,"response":99}`
	cases := []struct {
		name, body string
		code       int
		pointer    string
	}{
		{"NaN literal", `{"conc_unit":"M","points":[{"conc":NaN,"response":1}]}`, 400, ""},
		{"non-numeric conc", `{"conc_unit":"M","points":[{"conc":"abc","response":1}]}`, 422, "/points/0/conc"},
		{"infinite conc", `{"conc_unit":"M","points":[` + six + `,{"conc":1e400,"response":1}]}`, 422, "/points/5/conc"},
		{"negative conc", `{"conc_unit":"M","points":[` + six + `,{"conc":-1e-6,"response":1}]}`, 422, "/points/5/conc"},
		{"missing response", `{"conc_unit":"M","points":[` + six + `,{"conc":1e-6}]}`, 422, "/points/5/response"},
		{"zero weight", `{"conc_unit":"M","points":[` + six + `,{"conc":1e-6,"response":3,"weight":0}]}`, 422, "/points/5/weight"},
		{"too few points", `{"conc_unit":"M","points":[{"conc":1,"response":1},{"conc":2,"response":2},{"conc":3,"response":3},{"conc":4,"response":4}]}`, 422, "/points"},
		{"unknown model", `{"conc_unit":"M","model":"hill7","points":[` + six + `]}`, 422, "/model"},
		{"unknown unit", `{"conc_unit":"mg","points":[` + six + `]}`, 422, "/conc_unit"},
		// Nanomolar numbers read as molar once gave "EC50 = 2.8 M".
		{"no unit", `{"points":[` + six + `]}`, 422, "/conc_unit"},
		{"unknown fixed parameter", `{"conc_unit":"M","fixed":{"slope":1},"points":[` + six + `]}`, 422, "/fixed/slope"},
		{"bad confidence", `{"conc_unit":"M","confidence":1.5,"points":[` + six + `]}`, 422, "/confidence"},
		{"bad resamples", `{"conc_unit":"M","bootstrap":{"resamples":200000},"points":[` + six + `]}`, 422, "/bootstrap/resamples"},
		{"bad scheme", `{"conc_unit":"M","bootstrap":{"scheme":"wild"},"points":[` + six + `]}`, 422, "/bootstrap/scheme"},
		{"case scheme on single points", `{"conc_unit":"M","bootstrap":{"scheme":"case"},"points":[` + six + `]}`, 422, "/bootstrap/scheme"},
		{"unknown field", `{"pionts":[]}`, 422, "/pionts"},
		{"malformed JSON", `{"conc_unit":"M","points":[`, 400, ""},
		{"unknown assay", `{"conc_unit":"M","assay_id":"nope","points":[` + six + `]}`, 422, "/assay_id"},
		{"empty body", ``, 400, ""},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			w := ts.do("POST", "/v1/fits", ScopeSubmit, c.body)
			if c.body == "" {
				req := httptest.NewRequest("POST", "/v1/fits", nil)
				req.Header.Set("Authorization", "Bearer "+ts.tokens[ScopeSubmit])
				w = httptest.NewRecorder()
				ts.srv.Handler().ServeHTTP(w, req)
			}
			if w.Code != c.code {
				t.Fatalf("status %d, want %d: %s", w.Code, c.code, w.Body)
			}
			p := problemOf(t, w)
			if c.pointer != "" && (len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer) {
				t.Errorf("errors %+v, want pointer %s", p.Errors, c.pointer)
			}
		})
	}
	// Oversized body: 413.
	big := `{"conc_unit":"M","points":[` + strings.Repeat(`{"conc":1,"response":1},`, 60000) + `{"conc":1,"response":1}]}`
	if w := ts.do("POST", "/v1/fits", ScopeSubmit, big); w.Code != http.StatusRequestEntityTooLarge {
		t.Errorf("oversized: %d", w.Code)
	} else {
		problemOf(t, w)
	}
	if w := ts.do("POST", "/v1/fits", ScopeSubmit, `{"conc_unit":"M","points":[]}`, "Content-Type", "text/plain"); w.Code != http.StatusUnsupportedMediaType {
		t.Errorf("text/plain: %d", w.Code)
	}
	if n := ts.runs(); n != 0 {
		t.Errorf("%d runs stored by bad requests", n)
	}
}

func TestAuth(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	if w := ts.do("GET", "/v1/fits", "", ""); w.Code != 401 || w.Header().Get("WWW-Authenticate") == "" {
		t.Errorf("no token: %d", w.Code)
	} else {
		problemOf(t, w)
	}
	req := httptest.NewRequest("GET", "/v1/fits", nil)
	req.Header.Set("Authorization", "Bearer slc_not-a-token")
	w := httptest.NewRecorder()
	ts.srv.Handler().ServeHTTP(w, req)
	if w.Code != 401 {
		t.Errorf("bad token: %d", w.Code)
	}
	if w := ts.do("POST", "/v1/fits", ScopeRead, dnaseBody(t, "")); w.Code != 403 {
		t.Errorf("read token posting: %d", w.Code)
	} else {
		problemOf(t, w)
	}
	if w := ts.do("GET", "/v1/fits", ScopeSubmit, ""); w.Code != 200 {
		t.Errorf("submit token reading: %d", w.Code)
	}
	for _, path := range []string{"/healthz", "/readyz", "/metrics", "/v1/openapi.json"} {
		if w := ts.do("GET", path, "", ""); w.Code != 200 {
			t.Errorf("%s without a token: %d", path, w.Code)
		}
	}
	if w := ts.do("GET", "/v1/nothing", "", ""); w.Code != 404 {
		t.Errorf("unknown route: %d", w.Code)
	} else {
		problemOf(t, w)
	}
	if w := ts.do("DELETE", "/v1/fits", ScopeAdmin, ""); w.Code != 405 {
		t.Errorf("DELETE /v1/fits: %d", w.Code)
	}
}

func TestIdempotency(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		body := dnaseBody(t, "")
		a := ts.do("POST", "/v1/fits", ScopeSubmit, body, "Idempotency-Key", "run-42")
		b := ts.do("POST", "/v1/fits", ScopeSubmit, body, "Idempotency-Key", "run-42")
		if a.Code != 201 || b.Code != 201 || !bytes.Equal(a.Body.Bytes(), b.Body.Bytes()) {
			t.Fatalf("retry: %d then %d; bodies equal %v", a.Code, b.Code, bytes.Equal(a.Body.Bytes(), b.Body.Bytes()))
		}
		if b.Header().Get("Idempotency-Replayed") != "true" {
			t.Error("retry not marked as replayed")
		}
		if n := ts.runs(); n != 1 {
			t.Errorf("%d runs stored, want 1", n)
		}
		c := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"confidence":0.9`), "Idempotency-Key", "run-42")
		if c.Code != http.StatusConflict {
			t.Errorf("same key, other body: %d", c.Code)
		}
		// Without storing, a key still replays.
		d1 := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"store":false`), "Idempotency-Key", "calc-1")
		d2 := ts.do("POST", "/v1/fits", ScopeSubmit, dnaseBody(t, `,"store":false`), "Idempotency-Key", "calc-1")
		if d1.Code != 200 || d2.Code != 200 || d2.Header().Get("Idempotency-Replayed") != "true" {
			t.Errorf("store:false with a key: %d %d", d1.Code, d2.Code)
		}
		var nf wire.StoredFit
		json.Unmarshal(d1.Body.Bytes(), &nf)
		if nf.ID != "" || nf.Status != "converged" {
			t.Errorf("store:false response: %+v", nf)
		}
		if n := ts.runs(); n != 1 {
			t.Errorf("%d runs stored after store:false, want 1", n)
		}
	})
}

func TestCatalogueEndpoints(t *testing.T) {
	ts := newTestServer(t, dbtest.SQLite(t))
	w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"LGX7-dye","name":"LGX-7 membrane potential","target":"LGX-7","readout":"dye","units":"% max"}`)
	if w.Code != 201 {
		t.Fatalf("%d %s", w.Code, w.Body)
	}
	if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"LGX7-dye","name":"again"}`); w.Code != 409 {
		t.Errorf("duplicate: %d %s", w.Code, w.Body)
	}
	if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"bad id!","name":"x"}`); w.Code != 422 || problemOf(t, w).Errors[0].Pointer != "/id" {
		t.Errorf("bad id: %d %s", w.Code, w.Body)
	}
	g := ts.do("GET", "/v1/assays/LGX7-dye", ScopeRead, "")
	var e wire.CatalogueEntry
	json.Unmarshal(g.Body.Bytes(), &e)
	if g.Code != 200 || e.Units != "% max" || e.CreatedBy != "test-submit" {
		t.Errorf("get: %d %+v", g.Code, e)
	}
	if l := ts.do("GET", "/v1/assays", ScopeRead, ""); !strings.Contains(l.Body.String(), "LGX7-dye") {
		t.Errorf("list: %s", l.Body)
	}
	if l := ts.do("GET", "/v1/compounds", ScopeRead, ""); l.Code != 200 {
		t.Errorf("compounds: %d", l.Code)
	}
	// An assay names its reference compound (charted for drift); a
	// compound cannot, and a malformed id is refused at its field.
	if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"LGX7-ephys","name":"LGX-7 currents","reference_compound_id":"demo-ref"}`); w.Code != 422 || problemOf(t, w).Errors[0].Pointer != "/reference_compound_id" {
		t.Errorf("unregistered reference: %d %s", w.Code, w.Body)
	}
	if w := ts.do("POST", "/v1/compounds", ScopeSubmit, `{"id":"demo-ref","name":"reference agonist"}`); w.Code != 201 {
		t.Fatalf("compound: %d %s", w.Code, w.Body)
	}
	if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"LGX7-ephys","name":"LGX-7 currents","reference_compound_id":"demo-ref"}`); w.Code != 201 {
		t.Fatalf("assay with reference: %d %s", w.Code, w.Body)
	}
	g = ts.do("GET", "/v1/assays/LGX7-ephys", ScopeRead, "")
	e = wire.CatalogueEntry{}
	json.Unmarshal(g.Body.Bytes(), &e)
	if e.ReferenceCompoundID != "demo-ref" {
		t.Errorf("reference compound not stored: %s", g.Body)
	}
	if w := ts.do("POST", "/v1/compounds", ScopeSubmit, `{"id":"demo-x","name":"x","reference_compound_id":"demo-ref"}`); w.Code != 422 || problemOf(t, w).Errors[0].Pointer != "/reference_compound_id" {
		t.Errorf("compound with reference: %d %s", w.Code, w.Body)
	}
	if w := ts.do("POST", "/v1/assays", ScopeSubmit, `{"id":"a2","name":"x","reference_compound_id":"bad id!"}`); w.Code != 422 || problemOf(t, w).Errors[0].Pointer != "/reference_compound_id" {
		t.Errorf("bad reference id: %d %s", w.Code, w.Body)
	}
	if w := ts.do("GET", "/v1/fits?from=yesterday", ScopeRead, ""); w.Code != 400 || problemOf(t, w).Errors[0].Parameter != "from" {
		t.Errorf("bad from: %d %s", w.Code, w.Body)
	}
}
