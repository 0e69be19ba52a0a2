package api

import (
	"log/slog"
	"strconv"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"

	"sluice/db"
)

// metrics are the service's Prometheus collectors, on an injected registry.
// Names follow Prometheus conventions: sluice_ prefix, base units, _total
// for counters.
type metrics struct {
	requests      *prometheus.CounterVec
	duration      *prometheus.HistogramVec
	fits          *prometheus.CounterVec
	fitDuration   *prometheus.HistogramVec
	resamples     prometheus.Counter
	failedRefits  prometheus.Counter
	plateDuration prometheus.Histogram
	serverErrors  *prometheus.CounterVec
	connsOpen     prometheus.Gauge
	connsRefused  prometheus.Counter
	drift         driftMetrics
}

// Causes of a server error (the label cause of sluice_server_errors_total):
// an outage the client may retry (503: the database is unreachable or did
// not answer within its deadline) or a fault of Sluice itself (500).
const (
	causeUnavailable = "unavailable"
	causeInternal    = "internal"
)

// serverError counts a 5xx answer by its cause.
func (m *metrics) serverError(cause string) { m.serverErrors.WithLabelValues(cause).Inc() }

func newMetrics(reg prometheus.Registerer, store db.Store, log *slog.Logger) (*metrics, error) {
	m := &metrics{
		requests: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "sluice_http_requests_total", Help: "HTTP requests by route, method and status code.",
		}, []string{"route", "method", "code"}),
		duration: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name: "sluice_http_request_duration_seconds", Help: "HTTP request latency by route and method.",
			Buckets: []float64{0.0005, 0.001, 0.002, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10},
		}, []string{"route", "method"}),
		fits: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "sluice_fits_total", Help: "Curves fitted, by model and status.",
		}, []string{"model", "status"}),
		fitDuration: prometheus.NewHistogramVec(prometheus.HistogramOpts{
			Name: "sluice_fit_duration_seconds", Help: "Time to fit one curve, bootstrap included, by model.",
			Buckets: prometheus.ExponentialBuckets(1e-5, 4, 10),
		}, []string{"model"}),
		resamples: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "sluice_bootstrap_resamples_total", Help: "Bootstrap resamples refitted.",
		}),
		failedRefits: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "sluice_bootstrap_failed_refits_total", Help: "Bootstrap resamples whose refit did not converge.",
		}),
		plateDuration: prometheus.NewHistogram(prometheus.HistogramOpts{
			Name: "sluice_plate_fit_duration_seconds", Help: "Time to fit every curve of a plate.",
			Buckets: prometheus.ExponentialBuckets(0.01, 2, 14),
		}),
		serverErrors: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "sluice_server_errors_total",
			Help: "5xx answers by cause: unavailable (503, the database is down or frozen; retry later) or internal (500, a fault to investigate in the logs).",
		}, []string{"cause"}),
		connsOpen: prometheus.NewGauge(prometheus.GaugeOpts{
			Name: "sluice_http_connections_open", Help: "HTTP connections open, counted against the cap (--max-conns).",
		}),
		connsRefused: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "sluice_http_connections_refused_total", Help: "HTTP connections refused with a 503 because the cap (--max-conns) was reached.",
		}),
		drift: newDriftMetrics(),
	}
	// Both causes exist from the start, so that rate() sees the first one.
	m.serverErrors.WithLabelValues(causeUnavailable)
	m.serverErrors.WithLabelValues(causeInternal)
	cs := []prometheus.Collector{m.requests, m.duration, m.serverErrors, m.connsOpen, m.connsRefused, m.fits, m.fitDuration, m.resamples, m.failedRefits, m.plateDuration,
		collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{})}
	cs = append(cs, m.drift.collectors()...)
	if store != nil {
		cs = append(cs, poolCollector{store}, jobsCollector{jobs: store, log: log})
	}
	for _, c := range cs {
		if err := reg.Register(c); err != nil {
			return nil, err
		}
	}
	return m, nil
}

// middleware counts and times every request by its route template.
func (m *metrics) middleware(c *gin.Context) {
	start := time.Now()
	c.Next()
	route := c.FullPath()
	if route == "" {
		route = "unmatched"
	}
	method := methodLabel(c.Request.Method)
	m.requests.WithLabelValues(route, method, strconv.Itoa(c.Writer.Status())).Inc()
	m.duration.WithLabelValues(route, method).Observe(time.Since(start).Seconds())
}

// methodLabel maps a request's method to a fixed set of label values, so
// that a client cannot grow the series without bound by sending made-up
// methods (net/http accepts any token as a method): the methods of RFC 9110
// §9 and PATCH, and "other" for the rest.
func methodLabel(m string) string {
	switch m {
	case "GET", "HEAD", "POST", "PUT", "PATCH", "DELETE", "OPTIONS", "CONNECT", "TRACE":
		return m
	}
	return "other"
}

// poolCollector reports the store's connection pool.
type poolCollector struct{ store db.Store }

var (
	poolMaxDesc   = prometheus.NewDesc("sluice_db_connections_max", "Largest number of database connections the pool opens.", []string{"engine"}, nil)
	poolOpenDesc  = prometheus.NewDesc("sluice_db_connections_open", "Open database connections.", []string{"engine"}, nil)
	poolInUseDesc = prometheus.NewDesc("sluice_db_connections_in_use", "Database connections in use.", []string{"engine"}, nil)
	poolIdleDesc  = prometheus.NewDesc("sluice_db_connections_idle", "Idle database connections.", []string{"engine"}, nil)
)

func (p poolCollector) Describe(ch chan<- *prometheus.Desc) {
	ch <- poolMaxDesc
	ch <- poolOpenDesc
	ch <- poolInUseDesc
	ch <- poolIdleDesc
}

func (p poolCollector) Collect(ch chan<- prometheus.Metric) {
	s := p.store.Stats()
	e := p.store.Engine()
	ch <- prometheus.MustNewConstMetric(poolMaxDesc, prometheus.GaugeValue, float64(s.Max), e)
	ch <- prometheus.MustNewConstMetric(poolOpenDesc, prometheus.GaugeValue, float64(s.Open), e)
	ch <- prometheus.MustNewConstMetric(poolInUseDesc, prometheus.GaugeValue, float64(s.InUse), e)
	ch <- prometheus.MustNewConstMetric(poolIdleDesc, prometheus.GaugeValue, float64(s.Idle), e)
}

// CurveFitted implements service.Observer.
func (m *metrics) CurveFitted(model, status string, d time.Duration, resamples, failedRefits int) {
	m.fitDuration.WithLabelValues(model).Observe(d.Seconds())
	m.fits.WithLabelValues(model, status).Inc()
	if resamples > 0 {
		m.resamples.Add(float64(resamples))
		m.failedRefits.Add(float64(failedRefits))
	}
}

// PlateCurveFitted implements service.Observer.
func (m *metrics) PlateCurveFitted(model, status string, resamples, failedRefits int) {
	m.fits.WithLabelValues(model, status).Inc()
	if resamples > 0 {
		m.resamples.Add(float64(resamples))
		m.failedRefits.Add(float64(failedRefits))
	}
}

// PlateFitted implements service.Observer.
func (m *metrics) PlateFitted(d time.Duration) { m.plateDuration.Observe(d.Seconds()) }
