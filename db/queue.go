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
	// TimeoutMS bounds one attempt (JobOpts.Timeout) in milliseconds; 0,
	// as in jobs queued before it existed, means the queue's ceiling.
	TimeoutMS int64 `json:"timeout_ms,omitempty"`
}

// Kind names the job in River's table.
func (PlateFitArgs) Kind() string { return JobPlateFit }

// AnalysisArgs is the job of one single analysis too large for the
// synchronous budget (a fit, a potential prediction, …), stored before it
// was queued under ID.
type AnalysisArgs struct {
	Analysis string `json:"analysis"` // what to run, e.g. "fit", "potential"
	ID       string `json:"id"`       // what to run it on
	// TimeoutMS is as in PlateFitArgs.
	TimeoutMS int64 `json:"timeout_ms,omitempty"`
}

// JobOpts are a queued job's own settings.
type JobOpts struct {
	// Timeout bounds one attempt at the job: River cancels the attempt's
	// context then, and its rescuer leaves a running job alone until both
	// this and the rescue time (Options.RescueAfter) have passed since the
	// attempt began. The caller scales it to the job's work (the service:
	// service.JobTimeout). Zero means the ceiling Options.JobTimeout;
	// otherwise it is clamped to [MinJobTimeout, Options.JobTimeout].
	Timeout time.Duration
	// Small puts a plate's job in the small-job lane (QueueSmall), whose
	// workers take nothing else, so that it never waits behind large
	// plates (the service: Budget.SmallPlate). Analyses ignore it.
	Small bool
}

// timeoutMS is o's timeout in whole milliseconds (0: the ceiling).
func (o JobOpts) timeoutMS() int64 {
	if o.Timeout <= 0 {
		return 0
	}
	return max(o.Timeout, MinJobTimeout).Milliseconds()
}

// Kind names the job in River's table.
func (AnalysisArgs) Kind() string { return JobAnalysis }

// Job kinds, as River stores them.
const (
	JobPlateFit = "sluice_plate_fit"
	JobAnalysis = "sluice_analysis"
)

// The queue's lanes (River queues). Every job goes to QueueMain except
// plates queued with JobOpts.Small, which go to QueueSmall. Each lane has
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
	// Timeout is the job's own attempt timeout as queued (JobOpts), 0 for
	// the queue's ceiling.
	Timeout time.Duration
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
	// DefaultJobTimeout is the default ceiling of a job's own timeout
	// (JobOpts.Timeout), and the timeout of a job queued without one; a
	// 1536-well plate with B = 1000 takes about a second.
	DefaultJobTimeout = 10 * time.Minute
	// MinJobTimeout is the shortest timeout of an attempt, however small
	// its work: room for a slow database and a loaded machine.
	MinJobTimeout = 30 * time.Second
	// DefaultRescueAfter is the default of Options.RescueAfter: a job whose
	// attempt began this long ago, and longer ago than its own timeout,
	// is taken for orphaned (its worker died) and retried. River's
	// rescuer looks every RescuerInterval, so a job whose timeout is at
	// most DefaultRescueAfter is released within about 1.5 min of its start
	// (RescueBound).
	DefaultRescueAfter = time.Minute
	// RescuerInterval is how often River's rescuer (on the elected leader
	// among the workers) looks for orphaned jobs: its fixed default in
	// River v0.51.2 (maintenance.JobRescuerIntervalDefault), which the
	// client's Config does not expose.
	RescuerInterval = 30 * time.Second
	// LeaderFailover bounds how long the workers are without a leader
	// (so without a rescuer) after the leader dies: River's leadership
	// TTL (elect interval 5 s + 10 s padding) and one more election with
	// its jitter (5 s + 1 s), v0.51.2's internal/leadership defaults.
	LeaderFailover = 21 * time.Second
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
	txOf   func(context.Context, querier) (TTx, error)
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

func newRiverQueue[TTx any](ctx context.Context, driver riverdriver.Driver[TTx], txOf func(context.Context, querier) (TTx, error), poll time.Duration, o Options) (*riverQueue[TTx], error) {
	insert, err := river.NewClient(driver, &river.Config{Logger: o.Logger})
	if err != nil {
		return nil, fmt.Errorf("job queue: %w", err)
	}
	timeout, rescue := cmp.Or(o.JobTimeout, DefaultJobTimeout), cmp.Or(o.RescueAfter, DefaultRescueAfter)
	if timeout < MinJobTimeout {
		return nil, fmt.Errorf("job queue: the job timeout ceiling %v is below the least timeout %v", timeout, MinJobTimeout)
	}
	return &riverQueue[TTx]{driver: driver, insert: insert, txOf: txOf, poll: poll, log: o.Logger, timeout: timeout, rescue: rescue}, nil
}

// RescueBound is the longest the queue takes to release the job of a
// worker that died, counted from the start of the job's attempt (so at
// most this after the death): River's rescuer leaves a running job alone
// until both its own timeout and the rescue time have passed, looks every
// RescuerInterval, and runs on the elected leader, which another worker
// replaces within LeaderFailover when the dead one led:
//
//	bound = max(timeout, rescue) + RescuerInterval + LeaderFailover
//
// The released job is then retried after River's backoff (attempt⁴ s: 1 s
// after a first attempt, 16 s after a second) once a worker is free.
func RescueBound(timeout, rescue time.Duration) time.Duration {
	return max(timeout, rescue) + RescuerInterval + LeaderFailover
}

func (q *riverQueue[TTx]) enqueue(ctx context.Context, qr querier, args river.JobArgs, lane string) (int64, error) {
	tx, err := q.txOf(ctx, qr)
	if err != nil {
		return 0, err
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
		j.Target, j.Timeout = a.PlateID, a.timeout()
	case JobAnalysis:
		var a AnalysisArgs
		if err := json.Unmarshal(row.EncodedArgs, &a); err != nil {
			return nil, fmt.Errorf("job arguments: %w", err)
		}
		j.Target, j.Analysis, j.Timeout = a.ID, a.Analysis, a.timeout()
	}
	return j, nil
}

// start runs a River client with a worker for each handler given. Jobs get
// a context of their own, not the caller's: only stop cancels them, so a
// signal that ends the process's context does not kill running jobs.
func (q *riverQueue[TTx]) start(h Handlers, workers int) error {
	ws := river.NewWorkers()
	if h.Plate != nil {
		river.AddWorker(ws, &timedWorker[PlateFitArgs]{ceiling: q.timeout, work: func(ctx context.Context, job *river.Job[PlateFitArgs]) error {
			return q.attempt(ctx, job.JobRow, job.Args.PlateID, h.Failed, func(ctx context.Context) error {
				return h.Plate(ctx, job.Args.PlateID)
			})
		}})
	}
	if h.Analysis != nil {
		river.AddWorker(ws, &timedWorker[AnalysisArgs]{ceiling: q.timeout, work: func(ctx context.Context, job *river.Job[AnalysisArgs]) error {
			return q.attempt(ctx, job.JobRow, job.Args.ID, h.Failed, func(ctx context.Context) error {
				return h.Analysis(ctx, job.Args.Analysis, job.Args.ID)
			})
		}})
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
		Queues:  lanes,
		Workers: ws,
		// Every job has its own timeout (timedWorker); River's default
		// applies to none, but may not exceed the rescue time.
		JobTimeout:           min(q.timeout, q.rescue),
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

// timedArgs are job arguments that carry their attempt's timeout.
type timedArgs interface {
	river.JobArgs
	timeout() time.Duration
}

func (a PlateFitArgs) timeout() time.Duration { return time.Duration(a.TimeoutMS) * time.Millisecond }
func (a AnalysisArgs) timeout() time.Duration { return time.Duration(a.TimeoutMS) * time.Millisecond }

// timedWorker works one kind of job with the timeout its arguments carry
// (River's per-job Worker.Timeout, which its rescuer honours too), at most
// the queue's ceiling, the ceiling for a job without one.
type timedWorker[T timedArgs] struct {
	river.WorkerDefaults[T]
	ceiling time.Duration
	work    func(ctx context.Context, job *river.Job[T]) error
}

func (w *timedWorker[T]) Timeout(job *river.Job[T]) time.Duration {
	if t := job.Args.timeout(); t > 0 {
		return min(max(t, MinJobTimeout), w.ceiling)
	}
	return w.ceiling
}

func (w *timedWorker[T]) Work(ctx context.Context, job *river.Job[T]) error { return w.work(ctx, job) }
