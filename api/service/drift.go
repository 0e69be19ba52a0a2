package service

import (
	"errors"
	"math"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/drift"
)

// An assay's drift charts: one per metric, one point per assessed plate
// in experiment-time order (measured_at, else created_at; ties by plate
// ID), judged by fit/drift against the chart's baseline.

// driftMetric is a charted plate figure.
type driftMetric struct {
	name  string
	value func(p *db.DriftPlate) float64
}

// driftMetrics are the charted figures, in the order GET /v1/drift lists
// them.
var driftMetrics = []driftMetric{
	{"z_prime", func(p *db.DriftPlate) float64 { return p.ZPrime }},
	{"signal_window", func(p *db.DriftPlate) float64 { return p.SignalWindow }},
	{"max_control_mean", func(p *db.DriftPlate) float64 { return p.MaxMean }},
	{"max_control_cv", func(p *db.DriftPlate) float64 { return p.MaxCV }},
	{"min_control_mean", func(p *db.DriftPlate) float64 { return p.MinMean }},
	{"min_control_cv", func(p *db.DriftPlate) float64 { return p.MinCV }},
	{"reference_pec50", func(p *db.DriftPlate) float64 { return p.ReferencePEC50 }},
}

// metricR4s is the chart of R-4s within a plate: the plate's max and min
// control means, each standardised against its own chart's baseline, as
// one series grouped by plate and judged against 0 ± 1 by R-4s alone
// (fit/drift's package documentation). It exists once both control-mean
// charts have a baseline.
const metricR4s = "r4s"

// metricNames lists every chart's name, for error messages.
const metricNames = "z_prime, signal_window, max_control_mean, max_control_cv, min_control_mean, min_control_cv, reference_pec50, r4s"

func findMetric(name string) (driftMetric, bool) {
	for _, m := range driftMetrics {
		if m.name == name {
			return m, true
		}
	}
	return driftMetric{}, false
}

func validMetric(name string) bool {
	_, ok := findMetric(name)
	return ok || name == metricR4s
}

// statusNoBaseline is a chart's status while it has no baseline.
const statusNoBaseline = "no_baseline"

// chartPoint is one evaluated point with the plate it belongs to.
type chartPoint struct {
	plate *db.DriftPlate
	index int // the plate's index in the assay's series
	value float64
	res   drift.PointResult
}

// evaluated is a chart judged against its baseline.
type evaluated struct {
	metric string
	// base is nil when there is no baseline; then points carry no result.
	base   *wire.DriftBaseline
	source string
	mean   float64
	sd     float64
	status string
	points []chartPoint
}

// baselineOf resolves a metric's baseline from its stored chart (nil: the
// default, auto from the first 20 accepted plates) over the assay's
// plates. It returns nil when an auto baseline lacks plates.
func baselineOf(m driftMetric, stored *db.DriftChart, plates []db.DriftPlate) (*drift.Baseline, *wire.DriftBaseline) {
	if stored != nil && stored.Source != db.BaselineAuto {
		b := drift.Baseline{Mean: stored.Mean, SD: stored.SD}
		if b.Validate() != nil {
			return nil, nil
		}
		return &b, &wire.DriftBaseline{Mean: wire.Num(b.Mean), SD: wire.Num(b.SD), Source: stored.Source, Plates: stored.Plates}
	}
	runs := drift.DefaultBaselineRuns
	if stored != nil && stored.Runs > 0 {
		runs = stored.Runs
	}
	var accepted []float64
	for i := range plates {
		if v := m.value(&plates[i]); plates[i].Pass && isFinite(v) {
			accepted = append(accepted, v)
			if len(accepted) == runs {
				break
			}
		}
	}
	b, err := drift.BaselineFrom(accepted, runs)
	if err != nil {
		return nil, nil
	}
	return &b, &wire.DriftBaseline{Mean: wire.Num(b.Mean), SD: wire.Num(b.SD), Source: db.BaselineAuto, Runs: runs}
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// evaluateMetric charts one metric over the assay's plates. stored holds
// the assay's stored charts by metric.
func evaluateMetric(metric string, plates []db.DriftPlate, stored map[string]*db.DriftChart) (*evaluated, error) {
	if metric == metricR4s {
		return evaluateR4s(plates, stored)
	}
	m, _ := findMetric(metric)
	ev := &evaluated{metric: metric, status: statusNoBaseline}
	var series []drift.Point
	for i := range plates {
		v := m.value(&plates[i])
		if !isFinite(v) {
			continue
		}
		ev.points = append(ev.points, chartPoint{plate: &plates[i], index: i, value: v})
		series = append(series, drift.Point{Time: plates[i].MeasuredAt, Value: v, Group: plates[i].PlateID})
	}
	base, wb := baselineOf(m, stored[metric], plates)
	if base == nil {
		return ev, nil
	}
	return ev.judge(series, *base, wb, nil)
}

// evaluateR4s charts R-4s over the plates whose two control means both
// have a baseline.
func evaluateR4s(plates []db.DriftPlate, stored map[string]*db.DriftChart) (*evaluated, error) {
	ev := &evaluated{metric: metricR4s, status: statusNoBaseline}
	maxM, _ := findMetric("max_control_mean")
	minM, _ := findMetric("min_control_mean")
	maxB, _ := baselineOf(maxM, stored[maxM.name], plates)
	minB, _ := baselineOf(minM, stored[minM.name], plates)
	if maxB == nil || minB == nil {
		return ev, nil
	}
	var series []drift.Point
	for i := range plates {
		p := &plates[i]
		if !isFinite(p.MaxMean) || !isFinite(p.MinMean) {
			continue
		}
		zMax, zMin := maxB.Z(p.MaxMean), minB.Z(p.MinMean)
		ev.points = append(ev.points, chartPoint{plate: p, index: i, value: zMax}, chartPoint{plate: p, index: i, value: zMin})
		series = append(series, drift.Point{Time: p.MeasuredAt, Value: zMax, Group: p.PlateID},
			drift.Point{Time: p.MeasuredAt, Value: zMin, Group: p.PlateID})
	}
	unit := drift.Baseline{Mean: 0, SD: 1}
	return ev.judge(series, unit, &wire.DriftBaseline{Mean: 0, SD: 1, Source: db.BaselineStandard}, &drift.Settings{Rules: drift.Set(drift.RuleR4s)})
}

// judge evaluates the series (ev.points' values) against base.
func (ev *evaluated) judge(series []drift.Point, base drift.Baseline, wb *wire.DriftBaseline, set *drift.Settings) (*evaluated, error) {
	ch, err := drift.Evaluate(series, base, set)
	if err != nil {
		// The store holds finite values in time order, one point (two
		// for r4s) per plate: an error here is ours.
		return nil, errors.Join(errors.New("evaluate drift chart "+ev.metric), err)
	}
	ev.base, ev.source, ev.mean, ev.sd = wb, wb.Source, base.Mean, base.SD
	for i := range ev.points {
		ev.points[i].res = ch.Points[i]
	}
	ev.status = string(ch.Status)
	return ev, nil
}

// wireChart is the chart as GET /v1/assays/{id}/drift answers, its points
// restricted to [from, to) (zero does not bound).
func (ev *evaluated) wireChart(assayID string, from, to time.Time) *wire.DriftChart {
	out := &wire.DriftChart{AssayID: assayID, Metric: ev.metric, Baseline: ev.base, Status: ev.status, Points: []wire.DriftPoint{}}
	nan := wire.Num(math.NaN())
	for _, p := range ev.points {
		t := p.plate.MeasuredAt
		if (!from.IsZero() && t.Before(from)) || (!to.IsZero() && !t.Before(to)) {
			continue
		}
		wp := wire.DriftPoint{PlateID: p.plate.PlateID, Barcode: p.plate.Barcode, MeasuredAt: t.Format(time.RFC3339Nano),
			Value: wire.Num(p.value), Z: nan, EWMA: nan, EWMALimits: [2]wire.Num{nan, nan}, CUSUMHi: nan, CUSUMLo: nan, Violations: []string{}}
		if ev.base != nil {
			r := p.res
			wp.Z, wp.EWMA, wp.EWMALimits = wire.Num(r.Z), wire.Num(r.EWMA), [2]wire.Num{wire.Num(r.EWMALo), wire.Num(r.EWMAHi)}
			wp.CUSUMHi, wp.CUSUMLo, wp.Violations = wire.Num(r.CUSUMHi), wire.Num(r.CUSUMLo), r.Violations.Strings()
		}
		out.Points = append(out.Points, wp)
	}
	return out
}

// violations are the chart's violations at plates with series index ≥
// first, as records judged against the chart's baseline.
func (ev *evaluated) violations(assayID string, first int, at time.Time) []db.DriftViolation {
	if ev.base == nil {
		return nil
	}
	var out []db.DriftViolation
	for _, p := range ev.points {
		if p.index < first {
			continue
		}
		for _, rule := range p.res.Violations.Strings() {
			out = append(out, db.DriftViolation{AssayID: assayID, Metric: ev.metric, PlateID: p.plate.PlateID, Rule: rule,
				MeasuredAt: p.plate.MeasuredAt, Value: p.value, Z: p.res.Z, BaselineMean: ev.mean, BaselineSD: ev.sd,
				BaselineSource: ev.source, RecordedAt: at})
		}
	}
	return out
}

// chartRow is the chart's stored state after this evaluation: the stored
// baseline settings kept, the status new.
func (ev *evaluated) chartRow(assayID string, stored *db.DriftChart, at time.Time, by string) *db.DriftChart {
	c := &db.DriftChart{AssayID: assayID, Metric: ev.metric, Source: db.BaselineAuto, Mean: math.NaN(), SD: math.NaN()}
	if stored != nil {
		c.Source, c.Mean, c.SD, c.Runs, c.Plates = stored.Source, stored.Mean, stored.SD, stored.Runs, stored.Plates
	}
	if ev.metric == metricR4s {
		c.Source = db.BaselineStandard
	}
	if c.Source == db.BaselineAuto || c.Source == db.BaselineStandard {
		// The baseline in force, for readers of the row alone.
		c.Mean, c.SD = math.NaN(), math.NaN()
		if ev.base != nil {
			c.Mean, c.SD = ev.mean, ev.sd
		}
	}
	c.Status, c.UpdatedAt, c.UpdatedBy = ev.status, at, by
	return c
}

// chartsByMetric indexes stored charts.
func chartsByMetric(cs []db.DriftChart) map[string]*db.DriftChart {
	m := make(map[string]*db.DriftChart, len(cs))
	for i := range cs {
		m[cs[i].Metric] = &cs[i]
	}
	return m
}

// allMetrics are the charts evaluated for an assay.
func allMetrics() []string {
	out := make([]string, 0, len(driftMetrics)+1)
	for _, m := range driftMetrics {
		out = append(out, m.name)
	}
	return append(out, metricR4s)
}

// DriftMetricNames lists every chart's metric name (the bounded values of
// the metric label of sluice_drift_violations_total).
func DriftMetricNames() []string { return allMetrics() }
