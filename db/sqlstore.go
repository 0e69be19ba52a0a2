package db

import "context"

// sqlStore implements Store on either engine with one set of SQL text.
type sqlStore struct {
	e engine
	q queue
}

func (s *sqlStore) Ping(ctx context.Context) error { return s.read("Ping", "", s.e.ping(ctx)) }
func (s *sqlStore) Stats() PoolStats               { return s.e.stats() }
func (s *sqlStore) Engine() string                 { return s.e.name() }
func (s *sqlStore) Close()                         { s.e.close() }

var _ Store = (*sqlStore)(nil)

func (s *sqlStore) Job(ctx context.Context, id int64) (*Job, error) { return s.q.job(ctx, id) }

func (s *sqlStore) StartWorkers(ctx context.Context, work WorkFunc, workers int) error {
	return s.q.start(ctx, work, workers)
}

func (s *sqlStore) StopWorkers(ctx context.Context) error { return s.q.stop(ctx) }

func (w *sqlWriter) EnqueuePlateFit(ctx context.Context, plateID string) (int64, error) {
	if w.err != nil {
		return 0, w.err
	}
	id, err := w.queue.enqueue(ctx, w.q, PlateFitArgs{PlateID: plateID})
	if err != nil {
		return 0, w.abort(opError("EnqueuePlateFit", plateID, err, w.e.classify))
	}
	return id, nil
}
