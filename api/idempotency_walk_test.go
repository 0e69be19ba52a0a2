package api

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net/http/httptest"
	"strings"
	"sync"
	"testing"

	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/schild"
)

// walkRoute is a POST route for the idempotency walk: body(i) is a valid
// request, a different one for each i; stored counts the records the route
// has stored (nil for a read-scope calculator, which stores nothing and
// keeps no reply under its key).
type walkRoute struct {
	path, scope string
	body        func(i int) string
	stored      func(t *testing.T, store db.Store) int
}

// audited counts the audit entries of one action, one per stored record.
func audited(action string) func(*testing.T, db.Store) int {
	return func(t *testing.T, store db.Store) int {
		es, err := store.Audit(context.Background(), 10000)
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for _, e := range es {
			if e.Action == action {
				n++
			}
		}
		return n
	}
}

// walkRoutes returns the routes; a route whose path is a template gets its
// path from setups[path] (which stores what the route needs).
func walkRoutes(t *testing.T, setups map[string]func(*testing.T, *testServer) string) []walkRoute {
	wells, _ := invented384(3)
	var layout []map[string]any
	for _, w := range wells {
		lw := map[string]any{"well": w.Well, "role": w.Role}
		if w.CompoundID != "" {
			lw["compound_id"], lw["conc"] = w.CompoundID, *w.Conc
		}
		layout = append(layout, lw)
	}
	var ref, part []string
	for k := 0; k < 12; k++ {
		a := 1e-9 * math.Pow(10, 0.5*float64(k))
		ref = append(ref, fmt.Sprintf(`{"conc":%g,"response":%.12g}`, a, fit.Hill.Value([]float64{0, 100, -7, 1}, a)))
		part = append(part, fmt.Sprintf(`{"conc":%g,"response":%.12g}`, a, schild.Operational(100, 2e-6, 1.5, 1, a)))
	}
	marshal := func(v any) string {
		b, err := json.Marshal(v)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	layouts := func(t *testing.T, store db.Store) int {
		n := 0
		for i := range 3 {
			if _, err := store.Layout(context.Background(), fmt.Sprintf("walk-%d", i)); err == nil {
				n++
			}
		}
		return n
	}
	return append([]walkRoute{
		{"/v1/fits", ScopeSubmit, func(i int) string { return dnaseBody(t, fmt.Sprintf(`,"labels":{"walk":"%d"}`, i)) },
			func(t *testing.T, store db.Store) int {
				runs, _, err := store.FitRuns(context.Background(), db.FitFilter{Limit: 1000})
				if err != nil {
					t.Fatal(err)
				}
				return len(runs)
			}},
		{"/v1/assays", ScopeSubmit, func(i int) string { return fmt.Sprintf(`{"id":"A-%d","name":"assay %d"}`, i, i) }, audited("assay.create")},
		{"/v1/compounds", ScopeSubmit, func(i int) string { return fmt.Sprintf(`{"id":"C-%d","name":"compound %d"}`, i, i) }, audited("compound.create")},
		{"/v1/layouts", ScopeSubmit, func(i int) string {
			return marshal(map[string]any{"conc_unit": "M", "id": fmt.Sprintf("walk-%d", i), "name": "walk", "format": 384, "wells": layout})
		}, layouts},
		{"/v1/plates", ScopeSubmit, func(i int) string {
			return marshal(map[string]any{"conc_unit": "M", "barcode": fmt.Sprintf("WALK-%d", i), "format": 384, "wells": wells})
		}, audited("plate.create")},
		{"/v1/schild", ScopeSubmit, func(i int) string {
			return schildBody(func(float64) float64 { return 1 }, fmt.Sprintf(`,"confidence":0.9%d`, i))
		}, audited("schild.create")},
		{"/v1/potential", ScopeRead, func(i int) string {
			return strings.Replace(factsPotential, `"threshold_mv": -60`, fmt.Sprintf(`"threshold_mv": -6%d`, i), 1)
		}, nil},
		{"/v1/operational", ScopeRead, func(i int) string {
			return `{"conc_unit":"M","reference":[` + strings.Join(ref, ",") + `],"partial":[` + strings.Join(part, ",") + `],"confidence":0.9` + fmt.Sprint(i) + `}`
		}, nil},
		{"/v1/qc/rules", ScopeRead, func(i int) string {
			return fmt.Sprintf(`{"baseline":{"mean":100,"sd":2},"points":[{"value":101},{"value":10%d,"group":"p2"}]}`, i)
		}, nil},
	}, potencyWalkRoutes(t, setups)...)
}

// TestIdempotencyWalk sends every POST route the same request under one
// key twice in a row and N times at once, on both engines: one record is
// stored each time, every replay is byte-identical with the same status and
// says Idempotency-Replayed: true, and the key with another body is a 409.
func TestIdempotencyWalk(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		setups := map[string]func(*testing.T, *testServer) string{}
		for _, rt := range walkRoutes(t, setups) {
			t.Run(strings.TrimPrefix(rt.path, "/v1/"), func(t *testing.T) {
				if setup := setups[rt.path]; setup != nil {
					rt.path = setup(t, ts)
				}
				key := func(i int) string { return fmt.Sprintf("walk-%s-%d", rt.path, i) }
				if rt.stored == nil {
					calculatorWalk(t, ts, rt, key)
					return
				}
				// Twice in a row.
				a := ts.do("POST", rt.path, rt.scope, rt.body(0), "Idempotency-Key", key(0))
				b := ts.do("POST", rt.path, rt.scope, rt.body(0), "Idempotency-Key", key(0))
				if a.Code >= 300 {
					t.Fatalf("first: %d %s", a.Code, a.Body)
				}
				sameReply(t, "sequential", a, b)
				if a.Header().Get("Idempotency-Replayed") != "" {
					t.Error("the first answer says it is replayed")
				}
				// N at once.
				const n = 6
				ws := make([]*httptest.ResponseRecorder, n)
				var wg sync.WaitGroup
				for i := range n {
					wg.Add(1)
					go func() {
						defer wg.Done()
						ws[i] = ts.do("POST", rt.path, rt.scope, rt.body(1), "Idempotency-Key", key(1))
					}()
				}
				wg.Wait()
				fresh := 0
				for i := range n {
					if ws[i].Header().Get("Idempotency-Replayed") != "true" {
						fresh++
						ws[0], ws[i] = ws[i], ws[0]
					}
				}
				if fresh != 1 {
					t.Errorf("concurrent: %d answers not replayed, want 1", fresh)
				}
				for i := 1; i < n; i++ {
					sameReply(t, "concurrent", ws[0], ws[i])
				}
				if rt.stored != nil {
					if got := rt.stored(t, store); got != 2 {
						t.Errorf("%d records stored, want 2 (one per key)", got)
					}
				}
				// The key with another request.
				c := ts.do("POST", rt.path, rt.scope, rt.body(2), "Idempotency-Key", key(0))
				if p := problemOf(t, c); c.Code != 409 {
					t.Errorf("reused key: %d %+v, want 409", c.Code, p)
				}
			})
		}
		// The figure asked for by Accept, then the JSON under the same
		// key: the calculator keeps no reply, so each is answered afresh.
		t.Run("potential Accept", func(t *testing.T) {
			a := ts.do("POST", "/v1/potential", ScopeRead, factsPotential, "Idempotency-Key", "walk-accept", "Accept", "image/svg+xml")
			b := ts.do("POST", "/v1/potential", ScopeRead, factsPotential, "Idempotency-Key", "walk-accept")
			if a.Code != 200 || a.Header().Get("Content-Type") != "image/svg+xml" || b.Code != 200 || b.Header().Get("Content-Type") != "application/json" {
				t.Errorf("svg %d %s, then JSON under its key %d %s, want both 200", a.Code, a.Header().Get("Content-Type"), b.Code, b.Header().Get("Content-Type"))
			}
		})
		// ?wait is "submit, then wait": retried without it, the plate is
		// replayed, not refused or stored twice.
		t.Run("plates?wait", func(t *testing.T) {
			wells, _ := invented384(4)
			body, err := json.Marshal(map[string]any{"conc_unit": "M", "barcode": "WALK-WAIT", "format": 384, "wells": wells})
			if err != nil {
				t.Fatal(err)
			}
			before := audited("plate.create")(t, store)
			a := ts.do("POST", "/v1/plates?wait=1s", ScopeSubmit, string(body), "Idempotency-Key", "walk-wait")
			b := ts.do("POST", "/v1/plates", ScopeSubmit, string(body), "Idempotency-Key", "walk-wait")
			if a.Code >= 300 || b.Code >= 300 || b.Header().Get("Idempotency-Replayed") != "true" {
				t.Errorf("with wait %d, retried without %d (replayed %q): %s", a.Code, b.Code, b.Header().Get("Idempotency-Replayed"), b.Body)
			}
			if got := audited("plate.create")(t, store) - before; got != 1 {
				t.Errorf("%d plates stored, want 1", got)
			}
		})
	})
}

// sameReply checks that a replay matches the original byte for byte, its
// status and Location included.
// calculatorWalk is the walk of a read-scope calculator (POST
// /v1/potential, /v1/operational, /v1/qc/rules): its Idempotency-Key is
// accepted and ignored, so the same request under one key is answered
// afresh each time, identically (they are deterministic), another request
// under that key is answered too, and no record is kept under the key.
func calculatorWalk(t *testing.T, ts *testServer, rt walkRoute, key func(int) string) {
	t.Helper()
	var replies []*httptest.ResponseRecorder
	for i := range 3 {
		replies = append(replies, ts.do("POST", rt.path, rt.scope, rt.body(0), "Idempotency-Key", key(0)))
		if r := replies[i]; r.Code != 200 || r.Header().Get("Idempotency-Replayed") != "" {
			t.Fatalf("answer %d: %d (replayed %q) %.300s, want 200 afresh", i, r.Code, r.Header().Get("Idempotency-Replayed"), r.Body)
		}
		if i > 0 && replies[i].Body.String() != replies[0].Body.String() {
			t.Errorf("answer %d differs from the first for the same request", i)
		}
	}
	if c := ts.do("POST", rt.path, rt.scope, rt.body(2), "Idempotency-Key", key(0)); c.Code != 200 {
		t.Errorf("another request under the key: %d %.300s, want 200 (the key is ignored)", c.Code, c.Body)
	}
	if rec, err := ts.store.Idempotent(context.Background(), "test-"+rt.scope, key(0)); !errors.Is(err, db.ErrNotFound) {
		t.Errorf("a record kept under the key: %+v, %v", rec, err)
	}
}

func sameReply(t *testing.T, what string, a, b *httptest.ResponseRecorder) {
	t.Helper()
	if b.Code != a.Code || b.Body.String() != a.Body.String() || b.Header().Get("Content-Type") != a.Header().Get("Content-Type") ||
		b.Header().Get("Location") != a.Header().Get("Location") {
		t.Errorf("%s: replay %d %.200s, original %d %.200s", what, b.Code, b.Body, a.Code, a.Body)
	}
	if b.Header().Get("Idempotency-Replayed") != "true" {
		t.Errorf("%s: replay without Idempotency-Replayed: true", what)
	}
}
