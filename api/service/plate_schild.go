package service

import (
	"context"
	"encoding/json"
	"fmt"
	"sort"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
	"sluice/fit/schild"
)

// plateSchild runs a Schild analysis for every agonist/antagonist pair on
// the plate: the agonist's curves at each antagonist concentration, with
// its curve without antagonist (or at antagonist concentration 0) as the
// control. IDs are derived from the plate, so a retried job makes the same.
func (s *Service) plateSchild(ctx context.Context, p *db.Plate, specs []plate.CurveSpec, set wire.PlateSettings, bs *fit.BootSettings) ([]*db.SchildRun, error) {
	type pair struct{ agonist, antagonist string }
	groups := map[pair][]schild.Curve{}
	controls := map[string]fit.Curve{}
	for _, cs := range specs {
		if cs.AntagonistID == "" {
			controls[cs.CompoundID] = cs.Curve
			continue
		}
		k := pair{cs.CompoundID, cs.AntagonistID}
		groups[k] = append(groups[k], schild.Curve{AntagonistConc: cs.AntagonistConc, Points: cs.Curve.Points})
	}
	var keys []pair
	for k := range groups {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(a, b int) bool {
		return keys[a].agonist+"\x00"+keys[a].antagonist < keys[b].agonist+"\x00"+keys[b].antagonist
	})
	var runs []*db.SchildRun
	for _, k := range keys {
		curves := groups[k]
		hasControl := false
		for _, c := range curves {
			hasControl = hasControl || c.AntagonistConc == 0
		}
		if !hasControl {
			ctl, ok := controls[k.agonist]
			if !ok {
				continue
			}
			curves = append([]schild.Curve{{AntagonistConc: 0, Points: ctl.Points}}, curves...)
		}
		sset := &schild.Settings{Confidence: set.Fit.Confidence, Workers: s.fitWorkers}
		if bs != nil {
			sset.Resamples, sset.Seed = bs.Resamples, bs.Seed
			if sset.Resamples == 0 {
				sset.Resamples = fit.DefaultResamples
			}
		}
		res, err := schild.Analyze(ctx, curves, sset)
		if ctx.Err() != nil {
			return nil, fmt.Errorf("plate %s schild: %w", p.ID, ctx.Err())
		}
		if err != nil {
			s.log.Warn("plate schild", "plate", p.ID, "agonist", k.agonist, "antagonist", k.antagonist, "err", err)
			continue
		}
		out := wire.FromSchild(res, curves, sset.Seed)
		out.ID = p.ID + ":" + k.agonist + ":" + k.antagonist
		out.PlateID, out.AgonistID, out.AntagonistID = p.ID, k.agonist, k.antagonist
		out.CreatedAt = s.now().Format(time.RFC3339Nano)
		b, err := json.Marshal(out)
		if err != nil {
			return nil, fmt.Errorf("plate %s Schild %s: %w", p.ID, out.ID, err)
		}
		in, err := json.Marshal(map[string]any{"plate_id": p.ID, "agonist_id": k.agonist, "antagonist_id": k.antagonist})
		if err != nil {
			return nil, fmt.Errorf("plate %s Schild %s input: %w", p.ID, out.ID, err)
		}
		runs = append(runs, &db.SchildRun{ID: out.ID, CreatedAt: s.now(), SubmittedBy: p.SubmittedBy, PlateID: p.ID,
			AgonistID: k.agonist, AntagonistID: k.antagonist, EngineVersion: fit.EngineVersion, InputSHA256: p.InputSHA256,
			Input: in, Result: b})
	}
	return runs, nil
}
