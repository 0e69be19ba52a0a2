package service

import (
	"context"
	"errors"
	"sync/atomic"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// catalogueCounter counts the catalogue lookups a fit makes.
type catalogueCounter struct {
	db.Store
	assays, compounds atomic.Int64
}

func (c *catalogueCounter) Assay(ctx context.Context, id string) (*db.Assay, error) {
	c.assays.Add(1)
	return c.Store.Assay(ctx, id)
}

func (c *catalogueCounter) Compound(ctx context.Context, id string) (*db.Compound, error) {
	c.compounds.Add(1)
	return c.Store.Compound(ctx, id)
}

// A fit naming an assay and a compound looks each up once per process;
// later fits naming them skip the lookups. An unknown assay is looked up
// (and refused) every time, and a compound registered by a fit is found
// by the next one.
func TestKnownRefsSkipLookups(t *testing.T) {
	cs := &catalogueCounter{Store: dbtest.SQLite(t)}
	s := newTestService(t, cs)
	ctx := context.Background()
	who := Caller{Name: "test", Scope: ScopeSubmit}
	if _, err := s.CreateAssay(ctx, who, nil, wire.CatalogueEntry{ID: "A1", Name: "invented assay"}); err != nil {
		t.Fatal(err)
	}
	fitOf := func(assay, compound string) error {
		req := dnaseRequest(t)
		req.AssayID, req.CompoundID = assay, compound
		_, err := s.Fit(ctx, who, nil, req, []byte(assay+compound))
		return err
	}
	for i := range 3 {
		if err := fitOf("A1", "SLC-9"); err != nil {
			t.Fatalf("fit %d: %v", i, err)
		}
	}
	// The first fit registers SLC-9 (not found), the second finds it,
	// the third looks nothing up.
	if a, c := cs.assays.Load(), cs.compounds.Load(); a != 1 || c != 2 {
		t.Errorf("3 fits: %d assay and %d compound lookups, want 1 and 2", a, c)
	}
	for range 2 {
		var e *Error
		if err := fitOf("nope", ""); !errors.As(err, &e) || e.Kind != ErrInvalid || e.Fields[0].Pointer != "/assay_id" {
			t.Errorf("unknown assay: %v, want an invalid /assay_id", err)
		}
	}
	if a := cs.assays.Load(); a != 3 {
		t.Errorf("an unknown assay twice: %d lookups in all, want 3 (absence is not remembered)", a)
	}
}
