package service

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"sluice/db"
	"sluice/fit/plate"
)

// driftActor is the audit and chart author of evaluations a plate job
// makes.
const driftActor = "plate-job"

// driftPlan is what a finishing plate writes to its assay's charts: every
// chart's new state and the violations at and after the plate.
type driftPlan struct {
	assayID    string
	charts     []*db.DriftChart
	violations []db.DriftViolation
}

// driftNews is what a drift write recorded, for the observer.
type driftNews struct {
	assayID      string
	recorded     []db.DriftViolation // new violations only
	outOfControl bool
}

// referencePEC50 is the pEC50 on a plate of the assay's reference
// compound: the one the assay names, else the compound of the plate's
// first reference well; nil when there is none or its curve has no
// converged log EC50 (a curve against an antagonist never counts).
func referencePEC50(assayRef string, wells []plate.PlateWell, curves []db.PlateCurve) *float64 {
	ref := assayRef
	if ref == "" {
		for _, w := range wells {
			if w.Role == plate.Reference && w.CompoundID != "" {
				ref = w.CompoundID
				break
			}
		}
	}
	if ref == "" {
		return nil
	}
	for _, c := range curves {
		if c.CompoundID == ref && c.AntagonistID == "" && c.LogEC50 != nil && isFinite(*c.LogEC50) {
			p := -*c.LogEC50
			return &p
		}
	}
	return nil
}

// planDrift places a finishing plate (fig, not yet stored) among its
// assay's assessed plates by experiment time and evaluates every chart.
// A point depends only on the points before it, so only violations at or
// after the plate can be new: an out-of-order plate re-evaluates the
// window after it, and the store keeps each (chart, plate, rule) once.
// Plates that finish concurrently in the same assay are each evaluated
// without the other; the later evaluation of either chart sees both.
func (s *Service) planDrift(ctx context.Context, assayID string, fig db.DriftPlate) (*driftPlan, error) {
	if assayID == "" {
		return nil, nil
	}
	var zero db.DriftPlate
	plates, err := s.store.DriftPlates(ctx, assayID, zero.MeasuredAt, zero.MeasuredAt)
	if err != nil {
		return nil, fmt.Errorf("drift series of assay %s: %w", assayID, err)
	}
	plates = slices.DeleteFunc(plates, func(p db.DriftPlate) bool { return p.PlateID == fig.PlateID })
	pos, _ := slices.BinarySearchFunc(plates, fig, func(a, b db.DriftPlate) int {
		if c := a.MeasuredAt.Compare(b.MeasuredAt); c != 0 {
			return c
		}
		return cmpString(a.PlateID, b.PlateID)
	})
	plates = slices.Insert(plates, pos, fig)
	stored, err := s.store.AssayDriftCharts(ctx, assayID)
	if err != nil {
		return nil, fmt.Errorf("drift charts of assay %s: %w", assayID, err)
	}
	byMetric := chartsByMetric(stored)
	now := s.now()
	p := &driftPlan{assayID: assayID}
	for _, m := range allMetrics() {
		ev, err := evaluateMetric(m, plates, byMetric)
		if err != nil {
			return nil, err
		}
		p.charts = append(p.charts, ev.chartRow(assayID, byMetric[m], now, driftActor))
		p.violations = append(p.violations, ev.violations(assayID, pos, now)...)
	}
	return p, nil
}

func cmpString(a, b string) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// record stores the plan in w: every chart's state, and each violation
// unless recorded already (a retried job, a re-evaluated window).
func (p *driftPlan) record(ctx context.Context, w db.Writer) (*driftNews, error) {
	if p == nil {
		return nil, nil
	}
	news := &driftNews{assayID: p.assayID}
	for _, c := range p.charts {
		if err := w.UpsertDriftChart(ctx, c); err != nil {
			return nil, err
		}
		news.outOfControl = news.outOfControl || c.Status == "out_of_control"
	}
	for i := range p.violations {
		err := w.InsertDriftViolation(ctx, &p.violations[i])
		if errors.Is(err, db.ErrExists) {
			continue
		}
		if err != nil {
			return nil, err
		}
		news.recorded = append(news.recorded, p.violations[i])
	}
	return news, nil
}

// observeDrift tells the observer what a committed drift write recorded:
// each new violation once, and the assay's state.
func (s *Service) observeDrift(n *driftNews) {
	if n == nil {
		return
	}
	s.obs.AssayDrift(n.assayID, n.outOfControl)
	for _, v := range n.recorded {
		s.obs.DriftViolation(n.assayID, v.Metric, v.Rule)
	}
}

// driftFigures are a plate's charted figures from its QC.
func driftFigures(p *db.Plate, qc *db.PlateQC) db.DriftPlate {
	at := p.CreatedAt
	if p.MeasuredAt != nil {
		at = *p.MeasuredAt
	}
	ref := math.NaN()
	if qc.ReferencePEC50 != nil {
		ref = *qc.ReferencePEC50
	}
	return db.DriftPlate{PlateID: p.ID, Barcode: p.Barcode, MeasuredAt: at, Pass: qc.Pass, ZPrime: qc.ZPrime,
		SignalWindow: qc.SignalWindow, MaxMean: qc.MaxMean, MaxCV: qc.MaxCV, MinMean: qc.MinMean, MinCV: qc.MinCV, ReferencePEC50: ref}
}

// PlanDriftForBench is what a finishing plate's job adds for drift, for
// benchmarks outside the package: plan the stored plate's place in its
// assay's charts and return the write that records it.
func (s *Service) PlanDriftForBench(ctx context.Context, p *db.Plate) (func(db.Writer) error, error) {
	plan, err := s.planDrift(ctx, p.AssayID, driftFigures(p, p.Figures))
	if err != nil {
		return nil, err
	}
	return func(w db.Writer) error {
		_, err := plan.record(ctx, w)
		return err
	}, nil
}
