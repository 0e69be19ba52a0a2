package main

import (
	"bytes"
	"context"
	"reflect"
	"strings"
	"testing"
	"time"

	"sluice/db"
)

// The same seed gives the same plate, row for row; another seed another.
func TestSeedIsDeterministic(t *testing.T) {
	s := seedSpec{Plates: 10, CurvesPerPlate: 50, Assays: 3, Compounds: 200, Seed: 7, End: time.Date(2026, 6, 30, 0, 0, 0, 0, time.UTC)}
	a1, c1, l1 := seedCatalogue(s)
	p1, r1 := seedPlate(s, 4, a1, c1, l1)
	a2, c2, l2 := seedCatalogue(s)
	p2, r2 := seedPlate(s, 4, a2, c2, l2)
	if !reflect.DeepEqual(p1, p2) || !reflect.DeepEqual(r1, r2) {
		t.Fatal("one seed, two plates")
	}
	s.Seed = 8
	a3, c3, l3 := seedCatalogue(s)
	p3, _ := seedPlate(s, 4, a3, c3, l3)
	if p3.Plate.ID == p1.Plate.ID {
		t.Fatal("another seed, the same plate ID")
	}
	if p1.Plate.Format != 384 || len(p1.Wells) != 16*2+50*seedPoints || len(r1) != 50 {
		t.Fatalf("format %d, %d wells, %d curves", p1.Plate.Format, len(p1.Wells), len(r1))
	}
	seen := map[string]bool{}
	for _, w := range p1.Wells {
		if seen[w.Well] {
			t.Fatalf("well %s twice", w.Well)
		}
		seen[w.Well] = true
	}
}

// sluice seed fills the embedded store; the rows answer the store's queries.
func TestSeedCommand(t *testing.T) {
	dir := t.TempDir()
	var out, errb bytes.Buffer
	args := []string{"--plates", "250", "--curves-per-plate", "11", "--assays", "2", "--compounds", "40", "--data", dir}
	if code := run(append([]string{"seed"}, args...), nil, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "250 plates, 2750 curves") {
		t.Fatalf("output %q", out.String())
	}
	ctx := context.Background()
	store, err := db.Open(ctx, "", dir)
	if err != nil {
		t.Fatal(err)
	}
	defer store.Close()
	cs, err := store.CompoundCurves(ctx, db.CurveFilter{CompoundID: "demo-cmpd-000007"})
	if err != nil || len(cs) == 0 {
		t.Fatalf("history: %d curves, %v", len(cs), err)
	}
	for i := 1; i < len(cs); i++ {
		if cs[i].MeasuredAt.Before(cs[i-1].MeasuredAt) {
			t.Fatal("history out of order")
		}
	}
	if span := cs[len(cs)-1].MeasuredAt.Sub(cs[0].MeasuredAt); span < 365*24*time.Hour {
		t.Fatalf("measured_at spans only %v", span)
	}
	qc, err := store.PlateQCSeries(ctx, "demo-assay-001", "z_prime", time.Time{}, time.Time{})
	if err != nil || len(qc) < 50 {
		t.Fatalf("QC series: %d points, %v", len(qc), err)
	}
	p, err := store.Plate(ctx, cs[0].PlateID)
	if err != nil || p.Format != 96 || p.Status != db.PlateDone || p.Figures == nil {
		t.Fatalf("plate %+v %v", p, err)
	}
	if code := run([]string{"seed", "--curves-per-plate", "500", "--data", dir}, nil, &out, &errb); code != 2 {
		t.Fatalf("500 curves per plate: exit %d, want 2", code)
	}
}
