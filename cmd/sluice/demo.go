package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"time"

	"sluice/api"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// The demo scenario is invented from start to finish: Larkspur
// Neuropharmacology, a fictional lab, characterises agonists at LGX-7, an
// invented cation-selective ligand-gated channel, with a membrane-potential
// dye assay. A reference agonist runs every week for six weeks beside
// candidate compounds, and four 384-well screening plates follow (three
// agonist screens, one of which fails QC, and one antagonist plate). No real
// compound, receptor or dataset is depicted.

const demoAssay = "lgx7-vm-dye"

type demoCompound struct {
	id, name         string
	top, logEC, hill float64
}

var demoCompounds = []demoCompound{
	{"demo-ref", "demo-ref (reference full agonist)", 100, -6.5, 1.3},
	{"demo-ag-1", "demo-ag-1", 96, -7.2, 1.1},
	{"demo-ag-2", "demo-ag-2", 58, -6.1, 1.0}, // a partial agonist
	{"demo-ag-3", "demo-ag-3", 101, -5.4, 1.8},
	{"demo-ag-4", "demo-ag-4", 88, -7.9, 0.8},
}

// loadDemo loads the scenario through the service's use cases (the same
// that the API's handlers call) unless the store already has it, fits its
// plates in process, and returns how many single fits it stored.
func loadDemo(ctx context.Context, store db.Store) (int, error) {
	if _, err := store.Assay(ctx, demoAssay); err == nil {
		return 0, nil
	} else if !errors.Is(err, db.ErrNotFound) {
		return 0, err
	}
	svc, err := service.New(service.Deps{Store: store})
	if err != nil {
		return 0, err
	}
	who := service.Caller{Name: "demo", Scope: api.ScopeAdmin}
	if _, err := svc.CreateAssay(ctx, who, nil, wire.CatalogueEntry{ID: demoAssay, Name: "LGX-7 membrane-potential dye (demo)",
		Target: "LGX-7 (invented cation channel)", Readout: "membrane potential dye", Units: "% of reference max"}); err != nil {
		return 0, fmt.Errorf("demo assay: %w", err)
	}
	for _, c := range demoCompounds {
		if _, err := svc.CreateCompound(ctx, who, nil, wire.CatalogueEntry{ID: c.id, Name: c.name, Target: "LGX-7"}); err != nil {
			return 0, fmt.Errorf("demo compound %s: %w", c.id, err)
		}
	}
	rng := rand.New(rand.NewPCG(2026, 7))
	n := 0
	for week := 1; week <= 6; week++ {
		for k, c := range demoCompounds {
			if k > 0 && week%2 == 0 && k%2 == 0 {
				continue // candidates are not run every week
			}
			// Week-to-week potency drift of the assay: a few hundredths
			// of a log unit, as a real assay might show.
			shift := 0.04 * rng.NormFloat64()
			theta := []float64{0, c.top, c.logEC + shift, c.hill}
			var pts []wire.PointIn
			for i := -1; i < 10; i++ {
				conc := 0.0
				if i >= 0 {
					conc = 1 * math.Pow(10, 0.5*float64(i)) // nM
				}
				for r := 0; r < 3; r++ {
					y := math.Round((fit.Hill.Value(theta, conc*1e-9)+4*rng.NormFloat64())*100) / 100
					pts = append(pts, wire.PointIn{Conc: &conc, Response: &y})
				}
			}
			seed := uint64(1000*week + k)
			req := &wire.FitRequest{Model: "hill", ConcUnit: "nM", Points: pts, AssayID: demoAssay, CompoundID: c.id,
				Bootstrap: &wire.BootstrapIn{Resamples: 500, Seed: &seed},
				Labels:    map[string]string{"week": fmt.Sprintf("demo-week-%d", week), "plate": fmt.Sprintf("LK-%04d", 100+week)}}
			raw, err := json.Marshal(req)
			if err != nil {
				return n, fmt.Errorf("demo fit: %w", err)
			}
			if _, err := svc.Fit(ctx, who, nil, req, raw); err != nil {
				return n, fmt.Errorf("demo fit of %s, week %d: %w", c.id, week, err)
			}
			n++
		}
	}
	// Four 384-well plates, one a week: three agonist screens (the third
	// with a failing max control) and one antagonist plate (percent
	// inhibition of an EC80 of demo-ref). Fitted in process, in order.
	for week := 1; week <= 4; week++ {
		mode := "agonist"
		if week == 4 {
			mode = "antagonist"
		}
		req := demoPlate(rng, week, mode, week == 3)
		raw, err := json.Marshal(req)
		if err != nil {
			return n, fmt.Errorf("demo plate: %w", err)
		}
		_, acc, err := svc.SubmitPlate(ctx, who, nil, &service.PlateSubmission{Form: service.PlateJSON, Plate: req, Raw: raw})
		if err != nil {
			return n, fmt.Errorf("demo plate %s: %w", req.Barcode, err)
		}
		if err := svc.RunPlateJob(ctx, acc.PlateID); err != nil {
			return n, fmt.Errorf("demo plate %s: %w", req.Barcode, err)
		}
	}
	if err := loadDemoDrift(ctx, svc, who, rng); err != nil {
		return n, err
	}
	if err := loadDemoHistory(ctx, svc, store, who, rng); err != nil {
		return n, err
	}
	return n + demoHistoryRuns, nil
}

// demoPlate is an invented 384-well plate: max controls in columns 1–2, min
// in 23–24, 16 invented compounds (one per row) at 10 concentrations in
// duplicate. In antagonist mode the samples inhibit a fixed agonist
// stimulus; noisyMax makes the max controls scatter so that QC fails.
func demoPlate(rng *rand.Rand, week int, mode string, noisyMax bool) wire.PlateRequest {
	const lo, hi = 300.0, 2400.0
	f := plate.Plate384
	num := func(v float64) *float64 { return &v }
	req := wire.PlateRequest{AssayID: demoAssay, Barcode: fmt.Sprintf("LK-384-%02d", week), Format: 384, Mode: mode,
		MeasuredAt: time.Date(2026, 8, 17+7*week, 9, 0, 0, 0, time.UTC).Format(time.RFC3339), ConcUnit: "nM",
		Fit: &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: 200, Seed: func() *uint64 { s := uint64(week); return &s }()}}}
	maxSD := 50.0
	if noisyMax {
		maxSD = 450
	}
	for r := 0; r < 16; r++ {
		prefix := "demo-screen"
		if mode == "antagonist" {
			prefix = "demo-ant"
		}
		cpd := fmt.Sprintf("%s-%02d", prefix, r+1)
		logEC := -8.6 + 3*float64(r)/15 + 0.05*rng.NormFloat64()
		h := 0.8 + 0.12*float64(r%5)
		for c := 0; c < 24; c++ {
			w := wire.Well{Well: f.Name(plate.Well{Row: r, Col: c})}
			switch {
			case c < 2:
				w.Role, w.Value = "max_control", num(hi+maxSD*rng.NormFloat64())
			case c >= 22:
				w.Role, w.Value = "min_control", num(lo+40*rng.NormFloat64())
			default:
				concNM := 0.1 * math.Pow(10, 0.5*float64((c-2)/2))
				frac := fit.Hill.Value([]float64{0, 1, logEC, h}, concNM*1e-9)
				if mode == "antagonist" {
					frac = 1 - frac
				}
				w.Role, w.CompoundID, w.Conc, w.Value = "sample", cpd, num(concNM), num(lo+(hi-lo)*frac+40*rng.NormFloat64())
			}
			req.Wells = append(req.Wells, w)
		}
	}
	return req
}

// runDemo is `sluice demo`: load the scenario into the configured store.
func runDemo(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	ctx := context.Background()
	store, err := db.Open(ctx, getenv("SLUICE_DATABASE_URL"), *data)
	if err != nil {
		fmt.Fprintf(stderr, "sluice demo: %v\n", err)
		return 1
	}
	defer store.Close()
	n, err := loadDemo(ctx, store)
	if err != nil {
		fmt.Fprintf(stderr, "sluice demo: %v\n", err)
		return 1
	}
	if n == 0 {
		fmt.Fprintln(stdout, "sluice demo: the store already holds the demo scenario")
		return 0
	}
	fmt.Fprintf(stdout, "sluice demo: loaded the invented LGX-7 scenario: %d fits of %d compounds over six weeks, four 384-well plates (one fails QC) and %d daily control plates whose min control creeps late (GET /v1/drift)\n", n, len(demoCompounds), demoDriftPlates)
	return 0
}
