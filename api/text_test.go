package api

import (
	"testing"

	"sluice/db"
	"sluice/db/dbtest"
)

// Text the store cannot hold (a NUL character) is a 422 pointing at the
// field on both engines, before anything is computed or stored.
func TestNULText(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		for _, c := range []struct{ path, body, pointer string }{
			{"/v1/fits", dnaseBody(t, `,"labels":{"a":"x\u0000y"}`), "/labels/a"},
			{"/v1/fits", dnaseBody(t, `,"compound_id":"x\u0000y"`), "/compound_id"},
			{"/v1/assays", `{"id":"a1","name":"x\u0000y"}`, "/name"},
			{"/v1/compounds", `{"id":"c1","name":"c","units":"\u0000"}`, "/units"},
			{"/v1/schild", schildBody(func(float64) float64 { return 1 }, `,"antagonist_id":"x\u0000"`), "/antagonist_id"},
		} {
			w := ts.do("POST", c.path, ScopeSubmit, c.body)
			if p := problemOf(t, w); w.Code != 422 || len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer {
				t.Errorf("%s: %d %+v, want 422 at %s", c.path, w.Code, p, c.pointer)
			}
		}
		if n := ts.runs(); n != 0 {
			t.Errorf("%d runs stored", n)
		}
	})
}
