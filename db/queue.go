package db

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"time"

	"github.com/riverqueue/river"
	"github.com/riverqueue/river/riverdriver"
	"github.com/riverqueue/river/rivertype"
)

// PlateFitArgs is the job that QCs and fits one stored plate.
type PlateFitArgs struct {
	PlateID string `json:"plate_id"`
}

// Kind names the job in River's table.
func (PlateFitArgs) Kind() string { return "sluice_plate_fit" }

// Job is a queued job's state.
type Job struct {
	ID       int64
	State    string // River's: available, scheduled, running, retryable, completed, discarded, cancelled
	Attempt  int
	Errors   []string
	Finished *time.Time
}

// WorkFunc does one plate's job; an error makes River retry it.
type WorkFunc func(ctx context.Context, plateID string) error

// Queue settings.
const (
	// jobTimeout bounds one attempt at a plate; a 1536-well plate with
	// B = 1000 takes about a second.
	jobTimeout = 10 * time.Minute
	// rescueAfter is when River hands the job of a worker that died to
	// another one.
	rescueAfter = 11 * time.Minute
	// maxAttempts is how often a failing plate is tried.
	maxAttempts = 5
)

// queue is River on one engine.
type queue interface {
	enqueue(ctx context.Context, q querier, args PlateFitArgs) (int64, error)
	job(ctx context.Context, id int64) (*Job, error)
	start(ctx context.Context, work WorkFunc, workers int) error
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
	worker *river.Client[TTx]
	txOf   func(querier) (TTx, bool)
	poll   time.Duration
}

func newRiverQueue[TTx any](ctx context.Context, driver riverdriver.Driver[TTx], txOf func(querier) (TTx, bool), poll time.Duration) (*riverQueue[TTx], error) {
	insert, err := river.NewClient(driver, &river.Config{})
	if err != nil {
		return nil, fmt.Errorf("job queue: %w", err)
	}
	return &riverQueue[TTx]{driver: driver, insert: insert, txOf: txOf, poll: poll}, nil
}

func (q *riverQueue[TTx]) enqueue(ctx context.Context, qr querier, args PlateFitArgs) (int64, error) {
	tx, ok := q.txOf(qr)
	if !ok {
		return 0, errors.New("enqueue outside a transaction")
	}
	res, err := q.insert.InsertTx(ctx, tx, args, &river.InsertOpts{MaxAttempts: maxAttempts})
	if err != nil {
		return 0, err
	}
	return res.Job.ID, nil
}

func (q *riverQueue[TTx]) job(ctx context.Context, id int64) (*Job, error) {
	row, err := q.insert.JobGet(ctx, id)
	if errors.Is(err, river.ErrNotFound) {
		return nil, &Error{Op: "Job", Key: strconv.FormatInt(id, 10), Err: ErrNotFound}
	}
	if err != nil {
		return nil, &Error{Op: "Job", Key: strconv.FormatInt(id, 10), Err: err, cause: err}
	}
	return jobOf(row), nil
}

func jobOf(row *rivertype.JobRow) *Job {
	j := &Job{ID: row.ID, State: string(row.State), Attempt: row.Attempt, Finished: row.FinalizedAt}
	for _, e := range row.Errors {
		j.Errors = append(j.Errors, e.Error)
	}
	return j
}

func (q *riverQueue[TTx]) start(ctx context.Context, work WorkFunc, workers int) error {
	ws := river.NewWorkers()
	river.AddWorker(ws, river.WorkFunc(func(ctx context.Context, job *river.Job[PlateFitArgs]) error {
		return work(ctx, job.Args.PlateID)
	}))
	c, err := river.NewClient(q.driver, &river.Config{
		Queues:               map[string]river.QueueConfig{river.QueueDefault: {MaxWorkers: workers}},
		Workers:              ws,
		JobTimeout:           jobTimeout,
		RescueStuckJobsAfter: rescueAfter,
		FetchPollInterval:    q.poll,
		FetchCooldown:        q.poll / 2,
	})
	if err != nil {
		return err
	}
	q.worker = c
	return c.Start(ctx)
}

func (q *riverQueue[TTx]) stop(ctx context.Context) error {
	if q.worker == nil {
		return nil
	}
	return q.worker.Stop(ctx)
}
