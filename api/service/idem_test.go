package service

import (
	"context"
	"errors"
	"strings"
	"sync"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

func TestNewIdem(t *testing.T) {
	if i, err := NewIdem("", "POST /v1/fits", nil, []byte("{}")); i != nil || err != nil {
		t.Fatalf("no key: %v, %v; want nil, nil", i, err)
	}
	if _, err := NewIdem(strings.Repeat("k", MaxIdempotencyKey+1), "POST /v1/fits", nil, nil); !errors.Is(err, ErrBadRequest) {
		t.Errorf("long key: %v, want ErrBadRequest", err)
	}
	if _, err := NewIdem("a\x01b", "POST /v1/fits", nil, nil); !errors.Is(err, ErrBadRequest) {
		t.Errorf("control character: %v, want ErrBadRequest", err)
	}
	hash := func(route string, params map[string]string, body string) string {
		i, err := NewIdem("k", route, params, []byte(body))
		if err != nil {
			t.Fatal(err)
		}
		return i.Hash
	}
	base := hash("POST /v1/plates", map[string]string{"format": "96", "barcode": "B"}, "x")
	if base != hash("POST /v1/plates", map[string]string{"barcode": "B", "format": "96"}, "x") {
		t.Error("the hash depends on the order of the parameters")
	}
	for name, other := range map[string]string{
		"route":     hash("POST /v1/layouts", map[string]string{"format": "96", "barcode": "B"}, "x"),
		"parameter": hash("POST /v1/plates", map[string]string{"format": "384", "barcode": "B"}, "x"),
		"body":      hash("POST /v1/plates", map[string]string{"format": "96", "barcode": "B"}, "y"),
		// Length prefixes: moving a byte from a name to its value changes
		// the hash.
		"split": hash("POST /v1/plates", map[string]string{"forma": "t96", "barcode": "B"}, "x"),
	} {
		if other == base {
			t.Errorf("another %s hashes the same", name)
		}
	}
}

func newTestService(t *testing.T, store db.Store) *Service {
	t.Helper()
	s, err := New(Deps{Store: store})
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// TestWriteConcurrentDuplicates: N requests under one key at once store one
// record and all answer with the same reply.
func TestWriteConcurrentDuplicates(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		s := newTestService(t, store)
		ctx := context.Background()
		who := Caller{Name: "pipeline", Scope: "submit"}
		e := wire.CatalogueEntry{ID: "GABA", Name: "γ-aminobutyric acid"}
		idem, err := NewIdem("assay-1", "POST /v1/compounds", nil, []byte(`{"id":"GABA"}`))
		if err != nil {
			t.Fatal(err)
		}
		const n = 8
		replies := make([]*Reply, n)
		errs := make([]error, n)
		var wg sync.WaitGroup
		for i := range n {
			wg.Add(1)
			go func() {
				defer wg.Done()
				replies[i], errs[i] = s.CreateCompound(ctx, who, idem, e)
			}()
		}
		wg.Wait()
		fresh := 0
		for i := range n {
			if errs[i] != nil {
				t.Fatalf("request %d: %v", i, errs[i])
			}
			if string(replies[i].Body) != string(replies[0].Body) || replies[i].Status != replies[0].Status {
				t.Errorf("request %d answered %d %s, request 0 %d %s", i, replies[i].Status, replies[i].Body, replies[0].Status, replies[0].Body)
			}
			if !replies[i].Replayed {
				fresh++
			}
		}
		if fresh != 1 {
			t.Errorf("%d requests answered as new, want 1", fresh)
		}
		cs, err := store.Compounds(ctx)
		if err != nil || len(cs) != 1 {
			t.Fatalf("stored %d compounds (%v), want 1", len(cs), err)
		}
		// The same key for another request is a conflict, and stores nothing.
		other, _ := NewIdem("assay-1", "POST /v1/compounds", nil, []byte(`{"id":"glycine"}`))
		if _, err := s.CreateCompound(ctx, who, other, wire.CatalogueEntry{ID: "glycine", Name: "glycine"}); !errors.Is(err, ErrConflict) {
			t.Errorf("reused key: %v, want ErrConflict", err)
		}
		// Keys belong to their caller.
		r, err := s.CreateCompound(ctx, Caller{Name: "another"}, idem, wire.CatalogueEntry{ID: "glycine", Name: "glycine"})
		if err != nil || r.Replayed {
			t.Errorf("another caller's key: %v, replayed %v", err, r != nil && r.Replayed)
		}
	})
}
