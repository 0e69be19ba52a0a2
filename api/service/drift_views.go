package service

import (
	"context"
	"fmt"
	"time"

	"sluice/api/wire"
	"sluice/db"
)

// DriftChart is GET /v1/assays/{id}/drift: one metric of an assay over
// its assessed plates, judged now against the chart's baseline (stored
// violations are not rewritten: see DriftViolations in db). The whole
// series is evaluated (EWMA and CUSUM carry the past), then points with
// measured_at in [from, to) are returned (zero does not bound).
func (s *Service) DriftChart(ctx context.Context, assayID, metric string, from, to time.Time) (*wire.DriftChart, error) {
	ev, err := s.evaluateChart(ctx, assayID, metric)
	if err != nil {
		return nil, err
	}
	return ev.wireChart(assayID, from, to), nil
}

// evaluateChart reads an assay's series and charts one metric.
func (s *Service) evaluateChart(ctx context.Context, assayID, metric string) (*evaluated, error) {
	if !validMetric(metric) {
		return nil, BadParameter("metric", "metric %q is not charted; want one of %s", metric, metricNames)
	}
	plates, byMetric, err := s.assaySeries(ctx, assayID)
	if err != nil {
		return nil, err
	}
	return evaluateMetric(metric, plates, byMetric)
}

// assaySeries reads what charting an assay needs: its assessed plates
// (the whole series: limits and rules run from the first plate) and its
// stored charts by metric; ErrNotFound naming the assay when there is none.
func (s *Service) assaySeries(ctx context.Context, assayID string) ([]db.DriftPlate, map[string]*db.DriftChart, error) {
	if _, err := s.store.Assay(ctx, assayID); err != nil {
		return nil, nil, err
	}
	var zero time.Time
	plates, err := s.store.DriftPlates(ctx, assayID, zero, zero)
	if err != nil {
		return nil, nil, fmt.Errorf("drift series of assay %s: %w", assayID, err)
	}
	stored, err := s.store.AssayDriftCharts(ctx, assayID)
	if err != nil {
		return nil, nil, fmt.Errorf("drift charts of assay %s: %w", assayID, err)
	}
	return plates, chartsByMetric(stored), nil
}

// DriftOverview is GET /v1/drift: every charted assay and metric with its
// status after its latest evaluation and its latest recorded violation.
func (s *Service) DriftOverview(ctx context.Context) (*wire.DriftOverview, error) {
	cs, err := s.store.DriftCharts(ctx)
	if err != nil {
		return nil, fmt.Errorf("drift charts: %w", err)
	}
	out := &wire.DriftOverview{Charts: make([]wire.DriftStatus, 0, len(cs))}
	for _, c := range cs {
		st := wire.DriftStatus{AssayID: c.AssayID, Metric: c.Metric, Status: c.Status, UpdatedAt: c.UpdatedAt.Format(time.RFC3339Nano)}
		if v := c.Latest; v != nil {
			st.LatestViolation = &wire.DriftViolation{PlateID: v.PlateID, Rule: v.Rule, MeasuredAt: v.MeasuredAt.Format(time.RFC3339Nano),
				Value: wire.Num(v.Value), Z: wire.Num(v.Z), Baseline: wire.DriftBaseline{Mean: wire.Num(v.BaselineMean), SD: wire.Num(v.BaselineSD),
					Source: v.BaselineSource}, RecordedAt: v.RecordedAt.Format(time.RFC3339Nano)}
		}
		out.Charts = append(out.Charts, st)
	}
	return out, nil
}

// DriftCharts is every chart of an assay (the metrics in the order GET
// /v1/drift lists them, then r4s), each as DriftChart answers, from one
// read of the assay's series: the dashboard's assay drift page.
func (s *Service) DriftCharts(ctx context.Context, assayID string, from, to time.Time) ([]*wire.DriftChart, error) {
	plates, byMetric, err := s.assaySeries(ctx, assayID)
	if err != nil {
		return nil, err
	}
	var out []*wire.DriftChart
	for _, metric := range allMetrics() {
		ev, err := evaluateMetric(metric, plates, byMetric)
		if err != nil {
			return nil, err
		}
		out = append(out, ev.wireChart(assayID, from, to))
	}
	return out, nil
}
