package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net/http"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/drift"
)

// maxBaselineRuns bounds an auto baseline's plates.
const maxBaselineRuns = 10000

// PutBaseline is PUT /v1/assays/{id}/baselines/{metric} (admin): set the
// chart's baseline to an explicit mean and SD, to the mean and SD of
// listed plates, or back to automatic (the first runs accepted plates).
// The change is audited with the old and new baselines; the chart is
// judged afresh against the new one (the reply) and its status stored.
// Violations recorded before are kept as they were, with the baseline
// they were judged against; the new baseline's violations at the latest
// plate (the chart's present state) are recorded.
func (s *Service) PutBaseline(ctx context.Context, who Caller, idem *Idem, assayID, metric string, req *wire.BaselineRequest) (*Reply, error) {
	var news *driftNews
	r, err := s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		if metric == metricR4s {
			return plan{}, BadParameter("metric", "the r4s chart is judged against 0 ± 1 on the control means' baselines; set theirs")
		}
		if !validMetric(metric) {
			return plan{}, BadParameter("metric", "metric %q is not charted; want one of %s", metric, metricNames)
		}
		if _, err := s.store.Assay(ctx, assayID); err != nil {
			return plan{}, err
		}
		var zero time.Time
		plates, err := s.store.DriftPlates(ctx, assayID, zero, zero)
		if err != nil {
			return plan{}, fmt.Errorf("drift series of assay %s: %w", assayID, err)
		}
		storedList, err := s.store.AssayDriftCharts(ctx, assayID)
		if err != nil {
			return plan{}, fmt.Errorf("drift charts of assay %s: %w", assayID, err)
		}
		stored := chartsByMetric(storedList)
		now := s.now()
		next, err := baselineChart(req, assayID, metric, plates, now, who.Name)
		if err != nil {
			return plan{}, err
		}
		old := stored[metric]
		stored[metric] = next
		// The control means' baselines also judge the r4s chart.
		charts := []string{metric}
		if metric == "max_control_mean" || metric == "min_control_mean" {
			charts = append(charts, metricR4s)
		}
		p := &driftPlan{assayID: assayID}
		var reply *Reply
		for _, m := range charts {
			ev, err := evaluateMetric(m, plates, stored)
			if err != nil {
				return plan{}, err
			}
			row := ev.chartRow(assayID, stored[m], now, who.Name)
			p.charts = append(p.charts, row)
			p.violations = append(p.violations, ev.violations(assayID, len(plates)-1, now)...)
			if m == metric {
				if reply, err = jsonReply(http.StatusOK, ev.wireChart(assayID, zero, zero), ""); err != nil {
					return plan{}, err
				}
			}
		}
		detail, err := json.Marshal(map[string]any{"metric": metric, "old": auditBaseline(old), "new": auditBaseline(next)})
		if err != nil {
			return plan{}, fmt.Errorf("audit detail: %w", err)
		}
		return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
			n, err := p.record(ctx, w)
			if err != nil {
				return nil, fmt.Errorf("baseline of %s/%s: %w", assayID, metric, err)
			}
			if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: "drift.baseline", Target: assayID, Detail: detail}); err != nil {
				return nil, fmt.Errorf("audit baseline of %s/%s: %w", assayID, metric, err)
			}
			news = n
			return reply, nil
		}}, nil
	})
	if err == nil && !r.Replayed {
		s.observeDrift(news)
	}
	return r, err
}

// baselineChart validates a baseline request and returns the chart row
// it stores (status filled in later).
func baselineChart(req *wire.BaselineRequest, assayID, metric string, plates []db.DriftPlate, now time.Time, by string) (*db.DriftChart, error) {
	c := &db.DriftChart{AssayID: assayID, Metric: metric, Mean: math.NaN(), SD: math.NaN(), UpdatedAt: now, UpdatedBy: by}
	explicit := req.Mean != nil || req.SD != nil
	given := 0
	for _, b := range []bool{explicit, req.Plates != nil, req.Auto} {
		if b {
			given++
		}
	}
	if given != 1 {
		return nil, Invalid("", "give exactly one of mean and sd, plates, or auto: true")
	}
	if req.Runs != 0 && !req.Auto {
		return nil, Invalid("/runs", "runs goes with auto: true")
	}
	switch {
	case explicit:
		if req.Mean == nil {
			return nil, Invalid("/mean", "mean is required with sd")
		}
		if req.SD == nil {
			return nil, Invalid("/sd", "sd is required with mean")
		}
		b := drift.Baseline{Mean: *req.Mean, SD: *req.SD}
		if !isFinite(b.SD) || !(b.SD > 0) {
			return nil, Invalid("/sd", "sd must be finite and > 0, got %v", b.SD)
		}
		if !isFinite(b.Mean) {
			return nil, Invalid("/mean", "mean must be finite, got %v", b.Mean)
		}
		c.Source, c.Mean, c.SD = db.BaselineExplicit, b.Mean, b.SD
	case req.Plates != nil:
		m, _ := findMetric(metric)
		byID := make(map[string]*db.DriftPlate, len(plates))
		for i := range plates {
			byID[plates[i].PlateID] = &plates[i]
		}
		seen := make(map[string]bool, len(req.Plates))
		values := make([]float64, len(req.Plates))
		for i, id := range req.Plates {
			ptr := fmt.Sprintf("/plates/%d", i)
			p := byID[id]
			switch {
			case p == nil:
				return nil, Invalid(ptr, "plate %q is not an assessed plate of assay %s", id, assayID)
			case seen[id]:
				return nil, Invalid(ptr, "plate %q is listed twice", id)
			case !isFinite(m.value(p)):
				return nil, Invalid(ptr, "plate %q has no %s", id, metric)
			}
			seen[id], values[i] = true, m.value(p)
		}
		if len(values) < 2 {
			return nil, Invalid("/plates", "list at least 2 plates")
		}
		b, err := drift.BaselineFrom(values, len(values))
		if err != nil {
			return nil, Invalid("/plates", "%v", err)
		}
		c.Source, c.Mean, c.SD, c.Plates = db.BaselinePlates, b.Mean, b.SD, req.Plates
	default:
		if req.Runs != 0 && (req.Runs < 2 || req.Runs > maxBaselineRuns) {
			return nil, Invalid("/runs", "runs must be in [2, %d] (0 means %d)", maxBaselineRuns, drift.DefaultBaselineRuns)
		}
		c.Source, c.Runs = db.BaselineAuto, req.Runs
	}
	return c, nil
}

// auditBaseline is a stored baseline as the audit log records it; nil for
// the default (auto, 20 plates, never set).
func auditBaseline(c *db.DriftChart) map[string]any {
	if c == nil {
		return nil
	}
	m := map[string]any{"source": c.Source}
	switch c.Source {
	case db.BaselineAuto:
		m["runs"] = c.Runs
		if c.Runs == 0 {
			m["runs"] = drift.DefaultBaselineRuns
		}
	case db.BaselinePlates:
		m["plates"] = c.Plates
		fallthrough
	default:
		m["mean"], m["sd"] = c.Mean, c.SD
	}
	return m
}

// driftInvalid turns a fit/drift field error into a 422 pointing at the
// field under prefix ("baseline.sd" → prefix + "/baseline/sd",
// "points[3].value" → "/points/3/value").
func driftInvalid(err error, prefix string) error {
	var fe *drift.FieldError
	if !errors.As(err, &fe) {
		return Invalid(prefix, "%v", err)
	}
	ptr := prefix + "/" + fieldPointer(fe.Field)
	d := fe.Err.Error()
	return &Error{Kind: ErrInvalid, Detail: fe.Field + ": " + d, Fields: []FieldError{{Pointer: ptr, Detail: d}}}
}

// fieldPointer turns "points[3].value" into "points/3/value".
func fieldPointer(f string) string {
	out := make([]byte, 0, len(f))
	for i := 0; i < len(f); i++ {
		switch f[i] {
		case '.', '[':
			out = append(out, '/')
		case ']':
		default:
			out = append(out, f[i])
		}
	}
	return string(out)
}
