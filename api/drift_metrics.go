package api

import (
	"github.com/prometheus/client_golang/prometheus"

	"sluice/api/service"
	"sluice/fit/drift"
)

// driftMetrics are assay drift's collectors. Their labels stay bounded:
// assay_id counts assays (tens in a lab, not millions: they are created by
// hand), metric is one of eight charts and rule one of eight rules, so the
// counter has at most assays × 64 series and the gauge one per assay.
type driftMetrics struct {
	violations   *prometheus.CounterVec
	outOfControl *prometheus.GaugeVec
}

func newDriftMetrics() driftMetrics {
	return driftMetrics{
		violations: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "sluice_drift_violations_total",
			Help: "Control-rule violations recorded on assay drift charts, by assay, metric and rule (each recorded once).",
		}, []string{"assay_id", "metric", "rule"}),
		outOfControl: prometheus.NewGaugeVec(prometheus.GaugeOpts{
			Name: "sluice_assay_out_of_control",
			Help: "1 when any drift chart of the assay is out of control after its latest evaluation, else 0.",
		}, []string{"assay_id"}),
	}
}

func (d driftMetrics) collectors() []prometheus.Collector {
	return []prometheus.Collector{d.violations, d.outOfControl}
}

// DriftViolation implements service.Observer.
func (m *metrics) DriftViolation(assayID, metric, rule string) {
	m.drift.violations.WithLabelValues(assayID, metric, rule).Inc()
}

// AssayDrift implements service.Observer. It also creates the assay's
// violation counters at 0, so that increase() in an alert sees an assay's
// first violation (a series born at 1 has no increase to show).
func (m *metrics) AssayDrift(assayID string, outOfControl bool) {
	for _, metric := range service.DriftMetricNames() {
		for _, rule := range drift.AllRules.Strings() {
			m.drift.violations.WithLabelValues(assayID, metric, rule)
		}
	}
	v := 0.0
	if outOfControl {
		v = 1
	}
	m.drift.outOfControl.WithLabelValues(assayID).Set(v)
}
