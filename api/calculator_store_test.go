package api

import (
	"context"
	"errors"
	"fmt"
	"testing"

	"sluice/db"
	"sluice/db/dbtest"
)

// A read token cannot grow the database through the calculators (the
// audit's reproduction stored 83 MB in 3 s this way): each request under
// a new Idempotency-Key is answered, and neither a reply under its key nor
// anything else is stored.
func TestReadTokenCannotGrowStore(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		ctx := context.Background()
		before, err := store.Audit(ctx, 10000)
		if err != nil {
			t.Fatal(err)
		}
		var keys []string
		for _, rt := range walkRoutes(t, map[string]func(*testing.T, *testServer) string{}) {
			if rt.stored != nil {
				continue // a write route
			}
			for i := range 10 {
				key := fmt.Sprintf("grow-%s-%d", rt.path, i)
				if r := ts.do("POST", rt.path, ScopeRead, rt.body(i%3), "Idempotency-Key", key); r.Code != 200 {
					t.Fatalf("%s: %d %.300s", rt.path, r.Code, r.Body)
				}
				keys = append(keys, key)
			}
		}
		if len(keys) != 30 {
			t.Fatalf("%d calculator requests, want 3 routes × 10", len(keys))
		}
		for _, k := range keys {
			if _, err := store.Idempotent(ctx, "test-"+ScopeRead, k); !errors.Is(err, db.ErrNotFound) {
				t.Errorf("key %s: %v, want no record", k, err)
			}
		}
		if after, err := store.Audit(ctx, 10000); err != nil || len(after) != len(before) {
			t.Errorf("audit entries %d → %d (%v), want none added", len(before), len(after), err)
		}
	})
}
