package service

import (
	"context"
	"errors"
	"fmt"
	"math"

	"sluice/db"
	"sluice/fit"
	"sluice/fit/cost"
)

// storedCurve is a stored fit as an open-fraction curve.
type storedCurve struct {
	po    func(float64) float64
	draws []func(float64) float64 // one per converged bootstrap refit
	conf  float64
}

// storedCurve reads a stored fit as a rising open-fraction curve with, when
// it was bootstrapped, one curve per bootstrap draw. The draws are the ones
// stored with the fit; for a fit stored without them they are regenerated
// by refitting its input with its settings and seed (and must reproduce
// the stored estimates), once admit has accepted that refit's work and the
// band's over the draws.
func (s *Service) storedCurve(ctx context.Context, id string, admit func(refit cost.Work, draws int) error) (*storedCurve, error) {
	sf, err := s.StoredFit(ctx, id)
	if errors.Is(err, db.ErrNotFound) {
		return nil, Invalid("/curve_id", "no fit with id %q", id)
	}
	if err != nil {
		return nil, err
	}
	res := &sf.Result
	if res.Status != fit.StatusConverged {
		return nil, Invalid("/curve_id", "fit %s did not converge (%s)", id, res.Status)
	}
	theta := res.Params.Estimates()
	model := fit.Model(res.Model)
	if model.Top(theta) <= model.Bottom(theta) || (model.Monotone() && model.HillSlope(theta) <= 0) {
		return nil, Invalid("/curve_id", "fit %s is not a rising agonist curve", id)
	}
	sc := &storedCurve{po: openFraction(model, theta), conf: float64(res.Confidence)}
	if res.Bootstrap == nil {
		return sc, nil
	}
	rows, cols := sf.Run.BootDraws, sf.Run.BootCols
	if cols == 0 {
		if rows, cols, err = s.redrawBootstrap(ctx, sf, admit); err != nil {
			return nil, err
		}
	}
	if cols != len(theta) {
		return nil, fmt.Errorf("stored fit %s: %d draw columns for %d parameters", id, cols, len(theta))
	}
	for b := 0; b+cols <= len(rows); b += cols {
		if d := rows[b : b+cols]; !math.IsNaN(d[0]) { // failed refits are NaN rows
			sc.draws = append(sc.draws, openFraction(model, d))
		}
	}
	return sc, nil
}

// openFraction is the fitted response normalised to the fitted window,
// (f(c) − bottom)/(top − bottom), clamped to [0, 1].
func openFraction(m fit.Model, theta []float64) func(float64) float64 {
	bottom, top := m.Bottom(theta), m.Top(theta)
	return func(c float64) float64 {
		v := (m.Value(theta, c) - bottom) / (top - bottom)
		return math.Min(math.Max(v, 0), 1)
	}
}

// redrawBootstrap regenerates the bootstrap draws of a fit stored without
// them: it refits the stored input with the stored settings and seed and
// checks that the refit reproduces the stored estimates. The draws do not
// depend on the interval method, so the jackknife of BCa is skipped.
func (s *Service) redrawBootstrap(ctx context.Context, sf *StoredFit, admit func(refit cost.Work, draws int) error) ([]float64, int, error) {
	run, set := sf.Run, &sf.Settings
	b := set.Bootstrap
	if b == nil || b.Seed == nil {
		return nil, 0, fmt.Errorf("stored fit %s has no bootstrap seed", run.ID)
	}
	var curve fit.Curve
	for i, p := range sf.Input.Points {
		if p.Conc == nil || p.Response == nil {
			return nil, 0, fmt.Errorf("stored fit %s: point %d is incomplete", run.ID, i)
		}
		pt := fit.Point{Conc: sf.Unit.ToMolar(*p.Conc), Response: *p.Response}
		if p.Weight != nil {
			pt.Weight = *p.Weight
		}
		curve.Points = append(curve.Points, pt)
	}
	bs := &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.IntervalPercentile,
		Seed: *b.Seed, Workers: s.fitWorkers}
	resamples := b.Resamples
	if resamples == 0 {
		resamples = fit.DefaultResamples
	}
	if err := admit(fit.CostOf([]fit.Curve{curve}, len(sf.Result.Params), bs), resamples); err != nil {
		return nil, 0, err
	}
	r, err := fit.Fit(curve, &fit.Settings{Model: fit.Model(set.Model), Fixed: set.Fixed,
		Confidence: set.Confidence, MaxHill: set.MaxHill})
	if err != nil {
		return nil, 0, fmt.Errorf("refit stored fit %s: %w", run.ID, err)
	}
	if err := fit.Bootstrap(ctx, r, bs); err != nil {
		return nil, 0, fmt.Errorf("refit stored fit %s: %w", run.ID, err)
	}
	for i, p := range r.Params {
		if p.Estimate != float64(sf.Result.Params[i].Estimate) {
			return nil, 0, fmt.Errorf("refitting stored fit %s did not reproduce %s (engine %s, stored by %s)",
				run.ID, p.Name, fit.EngineVersion, run.EngineVersion)
		}
	}
	return r.Boot.Draws, len(r.Params), nil
}
