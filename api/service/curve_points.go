package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strings"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// CurveData is what a curve's plot shows: its result and the points it
// was fitted to (molar concentrations, 0 for the vehicle).
type CurveData struct {
	ID string
	// PlateID is the plate a plate curve comes from; "" for a single fit.
	PlateID string
	Result  wire.FitResult
	Points  []fit.Point
}

// CurveData reads a stored curve of either kind with its points: a single
// fit's input, or a plate curve's wells normalised as its job did (without
// the wells a refit left out).
func (s *Service) CurveData(ctx context.Context, id string) (*CurveData, error) {
	c, err := s.store.CurveResult(ctx, id)
	if err != nil {
		return nil, err
	}
	d := &CurveData{ID: id, PlateID: c.PlateID}
	if err := json.Unmarshal(c.Result, &d.Result); err != nil {
		return nil, fmt.Errorf("curve %s: result: %w", id, err)
	}
	if c.Kind == db.KindFit {
		var in wire.FitInput
		if err := json.Unmarshal(c.Input, &in); err != nil {
			return nil, fmt.Errorf("curve %s: input: %w", id, err)
		}
		unit, err := ingest.ParseUnit(in.ConcUnit)
		if err != nil {
			return nil, fmt.Errorf("curve %s: unit: %w", id, err)
		}
		for _, p := range in.Points {
			d.Points = append(d.Points, fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response})
		}
		return d, nil
	}
	p, err := s.store.Plate(ctx, c.PlateID)
	if err != nil {
		return nil, fmt.Errorf("plate of curve %s: %w", id, err)
	}
	if p.Figures == nil {
		return d, nil
	}
	var excluded []string
	if c.RefitOf != "" {
		ref, err := s.store.CurveRefit(ctx, id)
		if err != nil && !errors.Is(err, db.ErrNotFound) {
			return nil, err
		}
		if ref != nil {
			if err := json.Unmarshal(ref.Exclusions, &excluded); err != nil {
				return nil, fmt.Errorf("refit %s: exclusions: %w", id, err)
			}
		}
	}
	rows, err := s.store.Wells(ctx, p.ID)
	if err != nil {
		return nil, fmt.Errorf("wells of %s: %w", p.ID, err)
	}
	var wells []plate.PlateWell
	for _, r := range rows {
		role := plate.Role(r.Role)
		if r.Value == nil || role == plate.Excluded || role == plate.Empty || slices.Contains(excluded, r.Well) {
			continue
		}
		wells = append(wells, plate.PlateWell{Well: plate.Well{Row: r.Row, Col: r.Col}, Role: role, CompoundID: r.CompoundID,
			Conc: r.Conc, Value: *r.Value, AntagonistID: r.AntagonistID, AntagonistConc: r.AntagonistConc})
	}
	key, _, _ := strings.Cut(c.CurveKey, "#")
	for _, cs := range plate.Curves(wells, plate.Mode(p.Mode), p.Figures.MaxMean, p.Figures.MinMean) {
		if cs.Key == key {
			d.Points = cs.Curve.Points
		}
	}
	return d, nil
}
