package service

import (
	"context"
	"encoding/json"
	"fmt"
	"net/http"
	"strconv"
	"time"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/plate"
)

// CreateLayout is POST /v1/layouts: a plate map (wells → role, compound,
// concentration) checked by the plate rules without values
// (plate.ForLayout) and stored with canonical well names and molar
// concentrations, so that a grid upload using it needs no unit.
func (s *Service) CreateLayout(ctx context.Context, who Caller, idem *Idem, req *wire.LayoutRequest) (*Reply, error) {
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		if !ValidID(req.ID) {
			return plan{}, Invalid("/id", "id %q must be 1–100 letters, digits or ._:-", req.ID)
		}
		if !plate.PrintableID(req.Name) {
			return plan{}, Invalid("/name", "name must be printable text without control characters, at most %d bytes", plate.MaxIDLen)
		}
		f, err := plate.ParseFormat(strconv.Itoa(req.Format))
		if err != nil {
			return plan{}, Invalid("/format", "%v", err)
		}
		unit, err := ingest.ParseUnit(req.ConcUnit)
		if err == nil && sendsConc(WellsIn(req.Wells)) {
			unit, err = ingest.RequireUnit(unit, "conc_unit")
		}
		if err != nil {
			return plan{}, Invalid("/conc_unit", "%v", err)
		}
		checked, err := plate.Validate(f, plateWellInputs(WellsIn(req.Wells), unit), plate.ForLayout)
		if err != nil {
			return plan{}, plateProblem(err, JSONLocate)
		}
		stored := make([]wire.Well, len(checked))
		for i, w := range checked {
			stored[i] = req.Wells[i]
			stored[i].Well = w.Name
			if req.Wells[i].Conc != nil {
				stored[i].Conc = &checked[i].Conc
			}
			if req.Wells[i].AntagonistConc != nil {
				stored[i].AntagonistConc = &checked[i].AntagonistConc
			}
		}
		wells, err := json.Marshal(stored)
		if err != nil {
			return plan{}, fmt.Errorf("layout %s wells: %w", req.ID, err)
		}
		l := &db.Layout{ID: req.ID, Name: req.Name, Format: f.Wells, Wells: wells, CreatedAt: s.now(), CreatedBy: who.Name}
		reply, err := jsonReply(http.StatusCreated, wire.LayoutCreated{ID: req.ID, Name: req.Name, Format: f.Wells, Wells: len(req.Wells),
			ConcUnit: "M"}, "/v1/layouts/"+req.ID)
		if err != nil {
			return plan{}, err
		}
		return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
			if err := w.InsertLayout(ctx, l); err != nil {
				return nil, fmt.Errorf("store layout %s: %w", l.ID, err)
			}
			return reply, nil
		}}, nil
	})
}

// Layout is GET /v1/layouts/{id}: the layout as stored, wells and all
// (concentrations molar), so that the Location of POST /v1/layouts
// resolves.
func (s *Service) Layout(ctx context.Context, id string) (*wire.LayoutView, error) {
	l, err := s.store.Layout(ctx, id)
	if err != nil {
		return nil, err // db's error names the layout
	}
	v := layoutView(l)
	if err := json.Unmarshal(l.Wells, &v.Wells); err != nil {
		return nil, fmt.Errorf("stored layout %s: %w", id, err)
	}
	return &v, nil
}

// Layouts is GET /v1/layouts: every layout by ID, without wells.
func (s *Service) Layouts(ctx context.Context) ([]wire.LayoutView, error) {
	ls, err := s.store.Layouts(ctx)
	if err != nil {
		return nil, err
	}
	out := make([]wire.LayoutView, len(ls))
	for i := range ls {
		out[i] = layoutView(&ls[i])
	}
	return out, nil
}

func layoutView(l *db.Layout) wire.LayoutView {
	return wire.LayoutView{ID: l.ID, Name: l.Name, Format: l.Format, ConcUnit: "M",
		CreatedAt: l.CreatedAt.UTC().Format(time.RFC3339Nano), CreatedBy: l.CreatedBy}
}
