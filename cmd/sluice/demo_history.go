package main

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
)

// demoHistoryRuns is how many weekly runs of the reference agonist the
// demo's potency history holds: enough for the production MSR's window (6)
// and an overall MSR.
const demoHistoryRuns = 12

// loadDemoHistory gives the invented reference agonist LX-REF a potency
// history: twelve weekly runs with their experiment dates (between-run SD
// of log EC50 about 0.07, so an MSR near 1.6), one run rejected on review,
// one refitted without an outlier point; and a replicate-experiment MSR
// study of the first two agonist screens, which share their 16 compounds.
// Everything goes through the service's use cases, as the API's would.
func loadDemoHistory(ctx context.Context, svc *service.Service, store db.Store, who service.Caller, rng *rand.Rand) error {
	ref := demoCompounds[0]
	var ids []string
	for week := range demoHistoryRuns {
		theta := []float64{0, ref.top, ref.logEC + 0.07*rng.NormFloat64(), ref.hill}
		var pts []wire.PointIn
		for i := -1; i < 10; i++ {
			conc := 0.0
			if i >= 0 {
				conc = math.Pow(10, 0.5*float64(i)) // nM
			}
			for rep := range 2 {
				y := math.Round((fit.Hill.Value(theta, conc*1e-9)+4*rng.NormFloat64())*100) / 100
				if week == 7 && i == 6 && rep == 0 {
					y += 45 // a bubble in one well: the outlier the refit removes
				}
				pts = append(pts, wire.PointIn{Conc: &conc, Response: &y})
			}
		}
		seed := uint64(5000 + week)
		req := &wire.FitRequest{Model: "hill", ConcUnit: "nM", Points: pts, AssayID: demoAssay, CompoundID: ref.id,
			Bootstrap:  &wire.BootstrapIn{Resamples: 300, Seed: &seed},
			MeasuredAt: time.Date(2026, 5, 18, 10, 0, 0, 0, time.UTC).AddDate(0, 0, 7*week).Format(time.RFC3339),
			Labels:     map[string]string{"series": "reference history"}}
		raw, err := json.Marshal(req)
		if err != nil {
			return fmt.Errorf("demo history: %w", err)
		}
		r, err := svc.Fit(ctx, who, nil, req, raw)
		if err != nil {
			return fmt.Errorf("demo history run %d: %w", week, err)
		}
		var out struct {
			ID string `json:"id"`
		}
		if err := json.Unmarshal(r.Body, &out); err != nil {
			return fmt.Errorf("demo history run %d: %w", week, err)
		}
		ids = append(ids, out.ID)
	}
	if _, err := svc.Review(ctx, who, nil, ids[3], &wire.ReviewRequest{Decision: "rejected",
		Reason: "reference stock found degraded that week (demo)"}); err != nil {
		return fmt.Errorf("demo review: %w", err)
	}
	// Point 14 is the first replicate at 1 µM (i = 6: index 2·(6+1)).
	if _, err := svc.Refit(ctx, who, nil, ids[7], &wire.RefitRequest{Exclude: []json.RawMessage{json.RawMessage("14")},
		Reason: "air bubble in the well (demo)"}); err != nil {
		return fmt.Errorf("demo refit: %w", err)
	}
	plates, _, err := store.PlateList(ctx, db.PlateFilter{AssayID: demoAssay, Limit: 100})
	if err != nil {
		return fmt.Errorf("demo MSR study: %w", err)
	}
	var run1, run2 string
	for _, p := range plates {
		switch p.Barcode {
		case "LK-384-01":
			run1 = p.ID
		case "LK-384-02":
			run2 = p.ID
		}
	}
	if run1 == "" || run2 == "" {
		return fmt.Errorf("demo MSR study: the first two screens are missing")
	}
	if _, err := svc.CreateMSRStudy(ctx, who, nil, &wire.MSRStudyRequest{AssayID: demoAssay, Run1: []string{run1}, Run2: []string{run2}}); err != nil {
		return fmt.Errorf("demo MSR study: %w", err)
	}
	return nil
}
