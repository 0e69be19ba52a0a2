package db

import (
	"cmp"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"strconv"
	"sync"
	"sync/atomic"
	"time"

	"github.com/riverqueue/river"
	"github.com/riverqueue/river/riverdriver"
	"github.com/riverqueue/river/rivertype"
)

// PlateFitArgs is the job that QCs and fits one stored plate.
type PlateFitArgs struct {
	PlateID string `json:"plate_id"`
	// Work is the plate's estimated CPU work in cost units (package
	// fit/cost), as PlateJob gave it; zero for jobs queued before it was
	// recorded.
	Work float64 `json:"work,omitempty"`
}

// PlateJob is a plate's fit job as EnqueuePlateFit queues it.
type PlateJob struct {
	PlateID string
	// Work is the plate's estimated CPU work in cost units (package
	// fit/cost: fit.Cost summed over its curves); zero means unknown.
	Work float64
	// Small puts the job in the small-job lane (QueueSmall), whose workers
	// take nothing else, so that it never waits behind large plates.
	Small bool
}

// Kind names the job in River's table.
func (PlateFitArgs) Kind() string { return JobPlateFit }

// AnalysisArgs is the job of one single analysis too large for the
// synchronous budget (a fit, a potential prediction, …), stored before it
// was queued under ID.
type AnalysisArgs struct {
	Analysis string `json:"analysis"` // what to run, e.g. "fit", "potential"
	ID       string `json:"id"`       // what to run it on
}

// Kind names the job in River's table.
func (AnalysisArgs) Kind() string { return JobAnalysis }

// Job kinds, as River stores them.
const (
	JobPlateFit = "sluice_plate_fit"
	JobAnalysis = "sluice_analysis"
)

// The queue's lanes (River queues). Every job goes to QueueMain except
// plates marked PlateJob.Small, which go to QueueSmall. Each lane has
// workers of its own in every worker process (StartHandlers gives each
// lane its workers count), so a small plate is taken at once even while
// every main worker runs a large one: with two 1536-well plates of
// B = 10 000 running, a 96-well plate waited 66 s for one of them in a
// single first-in-first-out queue and 0.2 s with the lanes
// (TestSmallPlateOvertakesLargeOnes in package api). Within a lane jobs
// run first in, first out, so no job starves.
const (
	QueueMain  = river.QueueDefault
	QueueSmall = "sluice_small"
)

// Job is a queued job's state.
type Job struct {
	ID       int64
	Kind     string // JobPlateFit or JobAnalysis
	State    string // River's: available, scheduled, running, retryable, completed, discarded, cancelled
	Attempt  int
	Errors   []string
	Finished *time.Time
	// Target is the plate's ID (JobPlateFit) or the analysis' ID
	// (JobAnalysis); Analysis is the analysis' kind.
	Target   string
	Analysis string
}

// WorkFunc does one plate's job; an error makes River retry it.
type WorkFunc func(ctx context.Context, plateID string) error

// AnalysisFunc does one queued analysis; an error makes River retry it.
type AnalysisFunc func(ctx context.Context, analysis, id string) error

// Handlers are the work functions of the job kinds, one each; a nil one
// leaves its kind to other workers.
type Handlers struct {
	Plate    WorkFunc
	Analysis AnalysisFunc
	// Failed, if set, is told when a job's last attempt fails (River
	// discards the job next), with the job's kind, its target (plate or
	// analysis ID) and the error, so that what waits on the job can be
	// marked failed instead of waiting forever. It runs on a context of
	// its own, bounded by failedTimeout; its error is logged by River
	// with the job's.
	Failed func(ctx context.Context, kind, target string, err error) error
}

// Queue settings.
const (
	// jobTimeout bounds one attempt at a job; a 1536-well plate with
	// B = 1000 takes about a second.
	jobTimeout = 10 * time.Minute
	// rescueAfter is when River hands the job of a worker that died to
	// another one.
	rescueAfter = 11 * time.Minute
	// maxAttempts is how often a failing job is tried.
	maxAttempts = 5
	// failedTimeout bounds Handlers.Failed.
	failedTimeout = 30 * time.Second
	// hardStopWait bounds the wait for cancelled jobs to return after the
	// caller's grace period (StopWorkers) or on Close.
	hardStopWait = 10 * time.Second
)

// queue is River on one engine.
type queue interface {
	enqueue(ctx context.Context, q querier, args river.JobArgs, lane string) (int64, error)
	job(ctx context.Context, id int64) (*Job, error)
	start(h Handlers, workers int) error
	stop(ctx context.Context) error
}

// riverQueue is the job queue library River (well kept, with drivers for
// pgx and for database/sql SQLite) rather than a hand-made queue: jobs are
// rows inserted in the same transaction as the plate, fetched with SKIP
// LOCKED semantics on PostgreSQL, retried with backoff and rescued when a
// worker dies.
type riverQueue[TTx any] struct {
	driver riverdriver.Driver[TTx]
	insert *river.Client[TTx]
	txOf   func(querier) (TTx, bool)
	poll   time.Duration
	log    *slog.Logger // nil: River's default
	// timeout and rescue are River's JobTimeout and RescueStuckJobsAfter.
	timeout, rescue time.Duration

	mu     sync.Mutex
	worker *river.Client[TTx]
	// cancelling is set while stop cancels running jobs, so that their
	// attempts are given back (attempt).
	cancelling atomic.Bool
}

// attempt runs one attempt at a job. A panic is an error like any other.
// An attempt cancelled by stop is snoozed (River's JobSnooze(0): the job is
// available again at once and the attempt does not count), so that
// shutdowns never use up a job's retries. River does the same by itself
// only when the error wraps context.Canceled; a store error of a cancelled
// query, or a handler's own wording, need not. When the last attempt fails,
// failed is told before River discards the job.
func (q *riverQueue[TTx]) attempt(ctx context.Context, row *rivertype.JobRow, target string,
	failed func(ctx context.Context, kind, target string, err error) error, work func(context.Context) error) (err error) {
	defer func() {
		if v := recover(); v != nil {
			err = fmt.Errorf("job %d (%s) panicked: %v", row.ID, row.Kind, v)
		}
		switch {
		case err == nil:
		case ctx.Err() != nil && q.cancelling.Load():
			err = river.JobSnooze(0)
		case row.Attempt >= row.MaxAttempts && failed != nil:
			fctx, cancel := context.WithTimeout(context.WithoutCancel(ctx), failedTimeout)
			defer cancel()
			if ferr := failed(fctx, row.Kind, target, err); ferr != nil {
				err = errors.Join(err, fmt.Errorf("record the failure: %w", ferr))
			}
		}
	}()
	return work(ctx)
}

func newRiverQueue[TTx any](ctx context.Context, driver riverdriver.Driver[TTx], txOf func(querier) (TTx, bool), poll time.Duration, o Options) (*riverQueue[TTx], error) {
	insert, err := river.NewClient(driver, &river.Config{Logger: o.Logger})
	if err != nil {
		return nil, fmt.Errorf("job queue: %w", err)
	}
	timeout, rescue := cmp.Or(o.JobTimeout, jobTimeout), cmp.Or(o.RescueAfter, rescueAfter)
	if rescue < timeout {
		return nil, fmt.Errorf("job queue: rescue after %v is shorter than the job timeout %v", rescue, timeout)
	}
	return &riverQueue[TTx]{driver: driver, insert: insert, txOf: txOf, poll: poll, log: o.Logger, timeout: timeout, rescue: rescue}, nil
}

func (q *riverQueue[TTx]) enqueue(ctx context.Context, qr querier, args river.JobArgs, lane string) (int64, error) {
	tx, ok := q.txOf(qr)
	if !ok {
		return 0, errors.New("enqueue outside a transaction")
	}
	res, err := q.insert.InsertTx(ctx, tx, args, &river.InsertOpts{MaxAttempts: maxAttempts, Queue: lane})
	if err != nil {
		return 0, err
	}
	return res.Job.ID, nil
}

func (q *riverQueue[TTx]) job(ctx context.Context, id int64) (*Job, error) {
	key := strconv.FormatInt(id, 10)
	row, err := q.insert.JobGet(ctx, id)
	if errors.Is(err, river.ErrNotFound) {
		return nil, &Error{Op: "Job", Key: key, Err: ErrNotFound}
	}
	if err != nil {
		return nil, &Error{Op: "Job", Key: key, Err: err, cause: err}
	}
	j, err := jobOf(row)
	if err != nil {
		return nil, &Error{Op: "Job", Key: key, Err: err, cause: err}
	}
	return j, nil
}

func jobOf(row *rivertype.JobRow) (*Job, error) {
	j := &Job{ID: row.ID, Kind: row.Kind, State: string(row.State), Attempt: row.Attempt, Finished: row.FinalizedAt}
	for _, e := range row.Errors {
		j.Errors = append(j.Errors, e.Error)
	}
	switch row.Kind {
	case JobPlateFit:
		var a PlateFitArgs
		if err := json.Unmarshal(row.EncodedArgs, &a); err != nil {
			return nil, fmt.Errorf("job arguments: %w", err)
		}
		j.Target = a.PlateID
	case JobAnalysis:
		var a AnalysisArgs
		if err := json.Unmarshal(row.EncodedArgs, &a); err != nil {
			return nil, fmt.Errorf("job arguments: %w", err)
		}
		j.Target, j.Analysis = a.ID, a.Analysis
	}
	return j, nil
}

// start runs a River client with a worker for each handler given. Jobs get
// a context of their own, not the caller's: only stop cancels them, so a
// signal that ends the process's context does not kill running jobs.
func (q *riverQueue[TTx]) start(h Handlers, workers int) error {
	ws := river.NewWorkers()
	if h.Plate != nil {
		river.AddWorker(ws, river.WorkFunc(func(ctx context.Context, job *river.Job[PlateFitArgs]) error {
			return q.attempt(ctx, job.JobRow, job.Args.PlateID, h.Failed, func(ctx context.Context) error {
				return h.Plate(ctx, job.Args.PlateID)
			})
		}))
	}
	if h.Analysis != nil {
		river.AddWorker(ws, river.WorkFunc(func(ctx context.Context, job *river.Job[AnalysisArgs]) error {
			return q.attempt(ctx, job.JobRow, job.Args.ID, h.Failed, func(ctx context.Context) error {
				return h.Analysis(ctx, job.Args.Analysis, job.Args.ID)
			})
		}))
	}
	lanes := map[string]river.QueueConfig{QueueMain: {MaxWorkers: workers}}
	if h.Plate != nil {
		// As many as the main lane: a burst of small plates alone runs
		// as many at a time as before the lanes; with both lanes busy a
		// process runs up to twice workers jobs, the small ones short.
		lanes[QueueSmall] = river.QueueConfig{MaxWorkers: workers}
	}
	q.mu.Lock()
	defer q.mu.Unlock()
	q.cancelling.Store(false)
	if q.worker != nil {
		return errors.New("job queue: workers already started")
	}
	c, err := river.NewClient(q.driver, &river.Config{
		Queues:               lanes,
		Workers:              ws,
		JobTimeout:           q.timeout,
		RescueStuckJobsAfter: q.rescue,
		FetchPollInterval:    q.poll,
		FetchCooldown:        q.poll / 2,
		Logger:               q.log,
	})
	if err != nil {
		return fmt.Errorf("job queue: %w", err)
	}
	if err := c.Start(context.Background()); err != nil {
		return fmt.Errorf("job queue: %w", err)
	}
	q.worker = c
	return nil
}

// stop stops fetching jobs and lets running ones finish (River's soft
// Stop) until ctx is done; then it cancels them (StopAndCancel: River
// hands them back for a retry) and waits at most hardStopWait for them to
// return. It reports whether jobs had to be cancelled.
func (q *riverQueue[TTx]) stop(ctx context.Context) error {
	q.mu.Lock()
	c := q.worker
	q.worker = nil
	q.mu.Unlock()
	if c == nil {
		return nil
	}
	soft := c.Stop(ctx)
	if soft == nil {
		return nil
	}
	q.cancelling.Store(true)
	hardCtx, cancel := context.WithTimeout(context.WithoutCancel(ctx), hardStopWait)
	defer cancel()
	if err := c.StopAndCancel(hardCtx); err != nil {
		return fmt.Errorf("stop workers: cancelled jobs did not return within %v: %w", hardStopWait, err)
	}
	return fmt.Errorf("stop workers: running jobs cancelled after the grace period: %w", soft)
}
