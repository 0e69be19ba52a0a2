package api

import (
	"bytes"
	"context"
	"errors"
	"log/slog"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/testutil"

	"sluice/db"
	"sluice/db/dbtest"
)

// /metrics reports the queue's depth by kind, as the store counts it: what
// the worker autoscaler follows (deploy/k8s/base/worker-hpa.yaml).
func TestJobMetrics(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ts := newTestServer(t, s)
		ctx := context.Background()
		err := s.Write(ctx, func(w db.Writer) error {
			for _, p := range []string{"p1", "p2", "p3"} {
				if _, err := w.EnqueuePlateFit(ctx, p, db.JobOpts{}); err != nil {
					return err
				}
			}
			_, err := w.EnqueueAnalysis(ctx, "fit", "a1", db.JobOpts{})
			return err
		})
		if err != nil {
			t.Fatal(err)
		}
		want := `
# HELP sluice_jobs_queued Jobs waiting for a worker (available, scheduled or retryable), by kind.
# TYPE sluice_jobs_queued gauge
sluice_jobs_queued{kind="sluice_analysis"} 1
sluice_jobs_queued{kind="sluice_plate_fit"} 3
# HELP sluice_jobs_running Jobs a worker has taken and not finished, by kind.
# TYPE sluice_jobs_running gauge
sluice_jobs_running{kind="sluice_analysis"} 0
sluice_jobs_running{kind="sluice_plate_fit"} 0
`
		if err := testutil.GatherAndCompare(ts.reg, strings.NewReader(want), "sluice_jobs_queued", "sluice_jobs_running"); err != nil {
			t.Error(err)
		}
		problems, err := testutil.GatherAndLint(ts.reg, "sluice_jobs_queued", "sluice_jobs_running")
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range problems {
			t.Errorf("lint: %s: %s", p.Metric, p.Text)
		}
		// A worker-only replica serves them too.
		rec := httptest.NewRecorder()
		ts.srv.OpsHandler().ServeHTTP(rec, httptest.NewRequest("GET", "/metrics", nil))
		if !strings.Contains(rec.Body.String(), `sluice_jobs_queued{kind="sluice_plate_fit"} 3`) {
			t.Errorf("a worker's /metrics lacks the queue depth:\n%s", rec.Body)
		}
	})
}

type failingJobs struct{}

func (failingJobs) JobCounts(context.Context) ([]db.JobCount, error) {
	return nil, errors.New("db: JobCounts: connection refused")
}

// A store that does not answer leaves the two gauges out of the scrape,
// and says why in the log, instead of failing every other metric.
func TestJobMetricsStoreDown(t *testing.T) {
	var logs bytes.Buffer
	c := jobsCollector{jobs: failingJobs{}, log: slog.New(slog.NewTextHandler(&logs, nil))}
	if n := testutil.CollectAndCount(c); n != 0 {
		t.Errorf("%d samples from a failing store, want none", n)
	}
	if !strings.Contains(logs.String(), "connection refused") {
		t.Errorf("log does not say why: %q", logs.String())
	}
}

type agedJobs struct{ oldest time.Time }

func (a agedJobs) JobCounts(context.Context) ([]db.JobCount, error) {
	return []db.JobCount{{Kind: db.JobPlateFit, Running: 2, OldestRunning: a.oldest}, {Kind: db.JobAnalysis}}, nil
}

// sluice_jobs_oldest_running_seconds is the age of the oldest running
// attempt of each kind, 0 when none runs (deploy/prometheus/alerts.yml's
// SluiceJobRunningTooLong watches it).
func TestJobMetricsOldestRunning(t *testing.T) {
	reg := prometheus.NewRegistry()
	reg.MustRegister(jobsCollector{jobs: agedJobs{oldest: time.Now().Add(-90 * time.Second)}, log: slog.New(slog.DiscardHandler)})
	mfs, err := reg.Gather()
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]float64{}
	for _, mf := range mfs {
		if mf.GetName() != "sluice_jobs_oldest_running_seconds" {
			continue
		}
		for _, m := range mf.GetMetric() {
			got[m.GetLabel()[0].GetValue()] = m.GetGauge().GetValue()
		}
	}
	if a := got[db.JobPlateFit]; a < 90 || a > 100 {
		t.Errorf("plate jobs: oldest running %v s, want 90 s (began 90 s before the scrape)", a)
	}
	if a, ok := got[db.JobAnalysis]; !ok || a != 0 {
		t.Errorf("analyses: oldest running %v s (reported %v), want 0 with none running", a, ok)
	}
	problems, err := testutil.GatherAndLint(reg, "sluice_jobs_oldest_running_seconds")
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range problems {
		t.Errorf("lint: %s: %s", p.Metric, p.Text)
	}
}
