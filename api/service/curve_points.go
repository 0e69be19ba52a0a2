package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strconv"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// CurveData is what a curve's plot shows: its result, the points it was
// fitted to (molar concentrations, 0 for the vehicle) and the points its
// refits left out.
type CurveData struct {
	ID   string
	Kind string // db.KindFit or db.KindPlateCurve
	// PlateID is the plate a plate curve comes from; "" for a single fit.
	PlateID string
	// CompoundID is the curve's compound; "" when the fit named none.
	CompoundID string
	Result     wire.FitResult
	Points     []fit.Point
	// Names name the points as a refit of this version names them: a
	// single fit's index in its input ("0", "1", …), a plate curve's well
	// ("B7"); one per point.
	Names []string
	// Excluded are the points left out by this version and the versions
	// before it, where they were measured (a plate curve's wells
	// normalised as the others are); ExcludedNames name them as Names do
	// in the version that left them out.
	Excluded      []fit.Point
	ExcludedNames []string
}

// CurveData reads a stored curve of either kind with its points: a single
// fit's input, or a plate curve's wells normalised as its job did, and
// the points its refits left out.
func (s *Service) CurveData(ctx context.Context, id string) (*CurveData, error) {
	c, err := s.store.CurveResult(ctx, id)
	if err != nil {
		return nil, err
	}
	d := &CurveData{ID: id, Kind: c.Kind, PlateID: c.PlateID, CompoundID: c.CompoundID}
	if err := json.Unmarshal(c.Result, &d.Result); err != nil {
		return nil, fmt.Errorf("curve %s: result: %w", id, err)
	}
	if c.Kind == db.KindFit {
		pts, err := fitPoints(c)
		if err != nil {
			return nil, err
		}
		for i, p := range pts {
			d.Points, d.Names = append(d.Points, p), append(d.Names, strconv.Itoa(i))
		}
		return d, s.fitExcluded(ctx, c, d)
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
	// The curve's wells normalised as plate.Curves does: its sample or
	// reference wells at their concentration, its vehicle wells at 0.
	mode := plate.Mode(p.Mode)
	for _, r := range rows {
		role := plate.Role(r.Role)
		if r.Value == nil || !wellOfCurve(r, c) {
			continue
		}
		pt := fit.Point{Response: mode.Normalise(*r.Value, p.Figures.MaxMean, p.Figures.MinMean)}
		if role != plate.Vehicle {
			pt.Conc = r.Conc
		}
		if slices.Contains(excluded, r.Well) {
			d.Excluded, d.ExcludedNames = append(d.Excluded, pt), append(d.ExcludedNames, r.Well)
		} else {
			d.Points, d.Names = append(d.Points, pt), append(d.Names, r.Well)
		}
	}
	return d, nil
}

// wellOfCurve says whether a plate's well is a point of curve c: its
// compound's sample or reference wells at its antagonist concentration,
// and the vehicle wells it takes (its compound's or the shared ones), as
// plate.Curves groups them.
func wellOfCurve(r db.WellRow, c *db.CurveResult) bool {
	switch plate.Role(r.Role) {
	case plate.Sample, plate.Reference:
		return r.CompoundID == c.CompoundID && r.AntagonistID == c.AntagonistID && r.AntagonistConc == c.AntagonistConc
	case plate.Vehicle:
		return r.CompoundID == "" || r.CompoundID == c.CompoundID
	}
	return false
}

// fitPoints reads a single fit's stored input as molar points.
func fitPoints(c *db.CurveResult) ([]fit.Point, error) {
	var in wire.FitInput
	if err := json.Unmarshal(c.Input, &in); err != nil {
		return nil, fmt.Errorf("curve %s: input: %w", c.ID, err)
	}
	unit, err := ingest.ParseUnit(in.ConcUnit)
	if err != nil {
		return nil, fmt.Errorf("curve %s: unit: %w", c.ID, err)
	}
	out := make([]fit.Point, len(in.Points))
	for i, p := range in.Points {
		out[i] = fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response}
	}
	return out, nil
}

// maxRefitChain bounds the walk back through a single fit's versions.
const maxRefitChain = 100

// fitExcluded adds the points a single fit's refits left out: each refit
// stores the points it kept as its input, so a version's exclusions are
// indices into the input of the version before it, walked back to the
// first.
func (s *Service) fitExcluded(ctx context.Context, c *db.CurveResult, d *CurveData) error {
	for range maxRefitChain {
		if c.RefitOf == "" {
			return nil
		}
		ref, err := s.store.CurveRefit(ctx, c.ID)
		if errors.Is(err, db.ErrNotFound) {
			return nil
		} else if err != nil {
			return err
		}
		var idx []int
		if err := json.Unmarshal(ref.Exclusions, &idx); err != nil {
			return fmt.Errorf("refit %s: exclusions: %w", c.ID, err)
		}
		prev, err := s.store.CurveResult(ctx, c.RefitOf)
		if err != nil {
			return fmt.Errorf("curve %s, refitted by %s: %w", c.RefitOf, c.ID, err)
		}
		pts, err := fitPoints(prev)
		if err != nil {
			return err
		}
		for _, k := range idx {
			if k >= 0 && k < len(pts) {
				d.Excluded = append(d.Excluded, pts[k])
				d.ExcludedNames = append(d.ExcludedNames, fmt.Sprintf("%s #%d", prev.ID, k))
			}
		}
		c = prev
	}
	return nil
}
