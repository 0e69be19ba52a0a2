package db

import (
	"context"
	"errors"
	"time"
)

// sqlStore implements Store on either engine with one set of SQL text.
type sqlStore struct {
	e engine
	q queue
	// timeout bounds each call (Options.CallTimeout): the engine's
	// statements and the job queue's reads.
	timeout time.Duration
}

func (s *sqlStore) Ping(ctx context.Context) error { return s.read("Ping", "", s.e.ping(ctx)) }
func (s *sqlStore) Stats() PoolStats               { return s.e.stats() }
func (s *sqlStore) Engine() string                 { return s.e.name() }

// Close stops any workers still running (cancelling their jobs, which River
// hands back) and closes the engine.
func (s *sqlStore) Close() {
	ctx, cancel := context.WithCancel(context.Background())
	cancel() // no grace period: straight to the hard stop
	s.q.stop(ctx)
	s.e.close()
}

var _ Store = (*sqlStore)(nil)

// Job reads a job through River, under the call deadline.
func (s *sqlStore) Job(ctx context.Context, id int64) (*Job, error) {
	ctx, cancel := within(ctx, deadline(s.timeout))
	defer cancel()
	j, err := s.q.job(ctx, id)
	var se *Error
	if errors.As(err, &se) && !isSentinel(se.Err) && s.e.classify(timedOut(ctx, se.Err)) == ErrUnavailable {
		se.Err = ErrUnavailable
	}
	return j, err
}

func (s *sqlStore) StartWorkers(ctx context.Context, work WorkFunc, workers int) error {
	return s.q.start(Handlers{Plate: work}, workers)
}

func (s *sqlStore) StartHandlers(ctx context.Context, h Handlers, workers int) error {
	return s.q.start(h, workers)
}

func (s *sqlStore) StopWorkers(ctx context.Context) error { return s.q.stop(ctx) }

func (w *sqlWriter) EnqueuePlateFit(ctx context.Context, plateID string, o JobOpts) (int64, error) {
	if w.err != nil {
		return 0, w.err
	}
	lane := QueueMain
	if o.Small {
		lane = QueueSmall
	}
	ctx, cancel := withinTx(ctx, w.q)
	defer cancel()
	id, err := w.queue.enqueue(ctx, w.q, PlateFitArgs{PlateID: plateID, TimeoutMS: o.timeoutMS()}, lane)
	err = timedOut(ctx, err)
	if err != nil {
		return 0, w.abort(opError("EnqueuePlateFit", plateID, err, w.e.classify))
	}
	return id, nil
}

func (w *sqlWriter) EnqueueAnalysis(ctx context.Context, analysis, id string, o JobOpts) (int64, error) {
	if w.err != nil {
		return 0, w.err
	}
	if analysis == "" || checkArgs([]any{analysis, id}) != nil {
		return 0, w.invalid("EnqueueAnalysis", id, "analysis")
	}
	ctx, cancel := withinTx(ctx, w.q)
	defer cancel()
	jobID, err := w.queue.enqueue(ctx, w.q, AnalysisArgs{Analysis: analysis, ID: id, TimeoutMS: o.timeoutMS()}, QueueMain)
	err = timedOut(ctx, err)
	if err != nil {
		return 0, w.abort(opError("EnqueueAnalysis", id, err, w.e.classify))
	}
	return jobID, nil
}
