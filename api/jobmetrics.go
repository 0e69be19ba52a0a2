package api

import (
	"context"
	"log/slog"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"sluice/db"
)

// jobsCollector reports the job queue's depth at each scrape, counted in
// the store, so that every replica reports the same figures and an
// autoscaler can follow them (deploy/README.md: the worker
// HorizontalPodAutoscaler reads them through a Prometheus metrics adapter).
type jobsCollector struct {
	jobs interface {
		JobCounts(ctx context.Context) ([]db.JobCount, error)
	}
	log *slog.Logger
}

// jobsCountTimeout bounds the count at one scrape; a store that does not
// answer in time leaves the two gauges out of that scrape (and logs why)
// rather than failing the whole scrape.
const jobsCountTimeout = 2 * time.Second

var (
	jobsQueuedDesc = prometheus.NewDesc("sluice_jobs_queued",
		"Jobs waiting for a worker (available, scheduled or retryable), by kind.", []string{"kind"}, nil)
	jobsRunningDesc = prometheus.NewDesc("sluice_jobs_running",
		"Jobs a worker has taken and not finished, by kind.", []string{"kind"}, nil)
	jobsRetryableDesc = prometheus.NewDesc("sluice_jobs_retryable",
		"Queued jobs that failed an attempt and wait for the next one, by kind.", []string{"kind"}, nil)
	jobsOldestDesc = prometheus.NewDesc("sluice_jobs_oldest_running_seconds",
		"Age of the longest-running job's attempt (0 when none runs), by kind: far past the job timeout means a stuck worker or no rescuer.", []string{"kind"}, nil)
	jobsDiscardedDesc = prometheus.NewDesc("sluice_jobs_discarded",
		"Jobs whose last attempt failed (their plate or analysis is marked failed), still kept by the queue, by kind.", []string{"kind"}, nil)
)

func (j jobsCollector) Describe(ch chan<- *prometheus.Desc) {
	ch <- jobsQueuedDesc
	ch <- jobsRunningDesc
	ch <- jobsRetryableDesc
	ch <- jobsDiscardedDesc
	ch <- jobsOldestDesc
}

func (j jobsCollector) Collect(ch chan<- prometheus.Metric) {
	ctx, cancel := context.WithTimeout(context.Background(), jobsCountTimeout)
	defer cancel()
	counts, err := j.jobs.JobCounts(ctx)
	if err != nil {
		j.log.Warn("metrics: count jobs", "err", err)
		return
	}
	now := time.Now()
	for _, c := range counts {
		age := 0.0
		if !c.OldestRunning.IsZero() {
			age = max(now.Sub(c.OldestRunning).Seconds(), 0)
		}
		ch <- prometheus.MustNewConstMetric(jobsOldestDesc, prometheus.GaugeValue, age, c.Kind)
		ch <- prometheus.MustNewConstMetric(jobsQueuedDesc, prometheus.GaugeValue, float64(c.Queued), c.Kind)
		ch <- prometheus.MustNewConstMetric(jobsRunningDesc, prometheus.GaugeValue, float64(c.Running), c.Kind)
		ch <- prometheus.MustNewConstMetric(jobsRetryableDesc, prometheus.GaugeValue, float64(c.Retryable), c.Kind)
		ch <- prometheus.MustNewConstMetric(jobsDiscardedDesc, prometheus.GaugeValue, float64(c.Discarded), c.Kind)
	}
}
