package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/plate"
)

// Plates is GET /v1/plates: plates newest experiment first, one page, each
// as GET /v1/plates/{id} shows it without its curves.
func (s *Service) Plates(ctx context.Context, f db.PlateFilter) (*wire.PlateList, error) {
	if f.Cursor != "" {
		// The cursor is the last plate of the previous page; one that
		// names no plate would silently give an empty page.
		if _, err := s.store.Plate(ctx, f.Cursor); errors.Is(err, db.ErrNotFound) {
			return nil, BadParameter("cursor", "%q is not a cursor of this list; use next_cursor of the previous page as it is", f.Cursor)
		} else if err != nil {
			return nil, err
		}
	}
	ps, next, err := s.store.PlateList(ctx, f)
	if err != nil {
		return nil, err
	}
	out := &wire.PlateList{Plates: []json.RawMessage{}, NextCursor: next}
	for _, p := range ps {
		v := plateSummary(&p)
		b, err := json.Marshal(v)
		if err != nil {
			return nil, fmt.Errorf("encode plate %s: %w", p.ID, err)
		}
		out.Plates = append(out.Plates, b)
	}
	return out, nil
}

// plateSummary is a plate's view without curves or Schild analyses.
func plateSummary(p *db.Plate) *wire.PlateView {
	v := &wire.PlateView{PlateID: p.ID, Barcode: p.Barcode, Format: p.Format, AssayID: p.AssayID, Mode: p.Mode, Status: p.Status,
		JobID: p.JobID, Progress: wire.Progress{Done: p.CurvesDone, Total: p.CurvesTotal}, QC: p.QC, Error: p.Error,
		Caution: wire.Caution, Curves: []json.RawMessage{}}
	if p.MeasuredAt != nil {
		v.MeasuredAt = p.MeasuredAt.UTC().Format("2006-01-02T15:04:05Z07:00")
	}
	if v.QC == nil {
		v.QC = json.RawMessage("null")
	}
	return v
}

// PlateWells is GET /v1/plates/{id}/wells: every well with its role, raw
// value and, once the plate is assessed, its value normalised to the
// plate's control means (the plate's mode, as its curves were).
func (s *Service) PlateWells(ctx context.Context, id string) (*wire.WellList, error) {
	p, err := s.store.Plate(ctx, id)
	if err != nil {
		return nil, err
	}
	rows, err := s.store.Wells(ctx, id)
	if err != nil {
		return nil, fmt.Errorf("wells of %s: %w", id, err)
	}
	out := &wire.WellList{PlateID: id, Mode: p.Mode, Wells: make([]wire.WellOut, len(rows))}
	for i, r := range rows {
		w := wire.WellOut{Well: r.Well, Row: r.Row, Col: r.Col, Role: r.Role, CompoundID: r.CompoundID, Conc: wire.Num(r.Conc),
			AntagonistID: r.AntagonistID, AntagonistConc: wire.Num(r.AntagonistConc)}
		if r.Value != nil {
			v := wire.Num(*r.Value)
			w.Value = &v
			if p.Figures != nil {
				n := wire.Num(plate.Mode(p.Mode).Normalise(*r.Value, p.Figures.MaxMean, p.Figures.MinMean))
				w.Normalised = &n
			}
		}
		out.Wells[i] = w
	}
	return out, nil
}
