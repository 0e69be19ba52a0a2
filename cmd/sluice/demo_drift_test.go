package main

import (
	"context"
	"slices"
	"testing"
	"time"

	"sluice/api/service"
	"sluice/db/dbtest"
)

// The demo's min control creeps late in its history: nothing rejects it
// before the creep, and 4-1s, 10-x or the EWMA flag it before 1-3s does;
// the reference compound's pEC50 is charted on every control plate.
func TestDemoDrift(t *testing.T) {
	if testing.Short() {
		t.Skip("loads the whole demo")
	}
	store := dbtest.SQLite(t)
	ctx := context.Background()
	if _, err := loadDemo(ctx, store); err != nil {
		t.Fatal(err)
	}
	svc, err := service.New(service.Deps{Store: store})
	if err != nil {
		t.Fatal(err)
	}
	ch, err := svc.DriftChart(ctx, demoAssay, "min_control_mean", demoDriftStart, time.Time{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ch.Points) != demoDriftPlates || ch.Baseline == nil {
		t.Fatalf("%d control plates charted, baseline %+v", len(ch.Points), ch.Baseline)
	}
	firstSystematic, first13s := -1, -1
	for i, p := range ch.Points {
		rejects := slices.ContainsFunc(p.Violations, func(r string) bool { return r != "1-2s" })
		if i < demoCreepFrom && rejects {
			t.Errorf("plate %s (before the creep) rejected: %v", p.Barcode, p.Violations)
		}
		if firstSystematic < 0 && slices.ContainsFunc(p.Violations, func(r string) bool { return r == "4-1s" || r == "10-x" || r == "ewma" }) {
			firstSystematic = i
		}
		if first13s < 0 && slices.Contains(p.Violations, "1-3s") {
			first13s = i
		}
	}
	t.Logf("creep from plate %d: first systematic signal at %d, first 1-3s at %d; status %s", demoCreepFrom, firstSystematic, first13s, ch.Status)
	if firstSystematic < demoCreepFrom || (first13s >= 0 && first13s <= firstSystematic) || ch.Status != "out_of_control" {
		t.Errorf("systematic signal at %d, 1-3s at %d, status %s", firstSystematic, first13s, ch.Status)
	}
	ref, err := svc.DriftChart(ctx, demoAssay, "reference_pec50", demoDriftStart, time.Time{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ref.Points) != demoDriftPlates || float64(ref.Points[0].Value) < 6.2 || float64(ref.Points[0].Value) > 6.8 {
		t.Errorf("reference pEC50: %d points, first %v", len(ref.Points), ref.Points[0].Value)
	}
}
