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
	"sluice/fit"
	"sluice/fit/plate"
)

// The demo's assay drift: after the screening plates, the lab runs a small
// control plate every day (max and min controls, and the reference agonist
// demo-ref as reference wells), 40 days in all. The first 28 are in control;
// from day 29 the min control creeps upward by demoCreep a day (a dye lot
// slowly losing its quench, say): the creep stays inside 3 SD of one
// plate, so 4-1s, 10-x and the EWMA catch it before 1-3s would. Invented,
// like the rest of the scenario.
const (
	demoDriftPlates = 40
	demoCreepFrom   = 28   // the first creeping plate's index
	demoCreep       = 2.0  // added to the min control level per plate (signal units)
	demoMinLevel    = 300. // the min control's level, as on the screening plates
	demoMaxLevel    = 2400.
)

// demoDriftStart is the first control plate's day: after the screening
// plates.
var demoDriftStart = time.Date(2026, 9, 21, 9, 0, 0, 0, time.UTC)

// loadDemoDrift submits and fits the control plates in order.
func loadDemoDrift(ctx context.Context, svc *service.Service, who service.Caller, rng *rand.Rand) error {
	for i := range demoDriftPlates {
		req := demoControlPlate(rng, i)
		raw, err := json.Marshal(req)
		if err != nil {
			return fmt.Errorf("demo control plate: %w", err)
		}
		_, acc, err := svc.SubmitPlate(ctx, who, nil, &service.PlateSubmission{Form: service.PlateJSON, Plate: req, Raw: raw})
		if err != nil {
			return fmt.Errorf("demo control plate %s: %w", req.Barcode, err)
		}
		if err := svc.RunPlateJob(ctx, acc.PlateID); err != nil {
			return fmt.Errorf("demo control plate %s: %w", req.Barcode, err)
		}
	}
	return nil
}

// demoControlPlate is control plate i: a 96-well plate with 16 max and 16
// min controls (columns 1–2 and 11–12) and demo-ref at 8 concentrations in
// duplicate. Each plate's levels wander a little (a plate effect), wells
// scatter around them.
func demoControlPlate(rng *rand.Rand, i int) wire.PlateRequest {
	f := plate.Plate96
	num := func(v float64) *float64 { return &v }
	minLevel := demoMinLevel + 8*rng.NormFloat64()
	if i >= demoCreepFrom {
		minLevel += demoCreep * float64(i-demoCreepFrom+1)
	}
	maxLevel := demoMaxLevel + 10*rng.NormFloat64()
	logEC := -6.5 + 0.05*rng.NormFloat64() // demo-ref, as in the weekly fits
	req := wire.PlateRequest{AssayID: demoAssay, Barcode: fmt.Sprintf("LK-QC-%02d", i+1), Format: 96,
		MeasuredAt: demoDriftStart.AddDate(0, 0, i).Format(time.RFC3339), ConcUnit: "nM"}
	for r := 0; r < 8; r++ {
		for c := 0; c < 12; c++ {
			w := wire.Well{Well: f.Name(plate.Well{Row: r, Col: c})}
			switch {
			case c < 2:
				w.Role, w.Value = "max_control", num(maxLevel+40*rng.NormFloat64())
			case c >= 10:
				w.Role, w.Value = "min_control", num(minLevel+40*rng.NormFloat64())
			case c < 4:
				concNM := 10 * math.Pow(10, 0.5*float64(r)) // 10 nM – 31.6 µM
				frac := fit.Hill.Value([]float64{0, 1, logEC, 1.3}, concNM*1e-9)
				w.Role, w.CompoundID, w.Conc = "reference", "demo-ref", num(concNM)
				w.Value = num(minLevel + (maxLevel-minLevel)*frac + 40*rng.NormFloat64())
			default:
				w.Role = "empty"
			}
			req.Wells = append(req.Wells, w)
		}
	}
	return req
}
