package service

import (
	"context"
	"maps"
	"slices"

	"sluice/api/plot"
	"sluice/api/wire"
	"sluice/fit/membrane"
)

// CellPresets are the names cell.preset takes (fit/membrane's presets),
// sorted.
func CellPresets() []string { return slices.Sorted(maps.Keys(membrane.Presets)) }

// ChannelIons are the ions a channel's permeability may name, sorted.
func ChannelIons() []string { return slices.Sorted(maps.Keys(membrane.Valences)) }

// PotentialView is the dashboard's membrane-potential calculator: what
// POST /v1/potential answers as JSON and the figure it draws for
// ?format=svg, from one validation and one prediction. It stores nothing
// and never queues: a request over the synchronous budget is refused
// (422 naming agonist_conc) with the advice to send it to the API, which
// queues it.
func (s *Service) PotentialView(ctx context.Context, req *wire.PotentialRequest) (*wire.PotentialResponse, *plot.Curve, error) {
	m, lc, w, err := s.preparePotential(ctx, req, true)
	if err != nil {
		return nil, nil, err
	}
	if w > s.budget.Sync {
		return nil, nil, Invalid("/agonist_conc", "this prediction is about %.0f s of work, too long to wait for on a page; "+
			"give fewer concentrations, or send it to POST /v1/potential, which queues it", w.Seconds())
	}
	if lc != nil {
		sc, err := s.drawCurve(ctx, lc)
		if err != nil {
			return nil, nil, err
		}
		useCurve(req, m, sc)
	}
	out, err := predictPotential(ctx, req, m, s.fitWorkers)
	if err != nil {
		return nil, nil, err
	}
	fig, err := potentialFigure(ctx, req, m, out, s.fitWorkers)
	if err != nil {
		return nil, nil, err
	}
	return out, fig, nil
}
