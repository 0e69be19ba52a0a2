package service

import (
	"context"
	"fmt"
	"log/slog"
	"sync"
	"time"

	"sluice/api/wire"
	"sluice/db"
)

// MaxWait bounds how long a caller may wait for a plate (POST
// /v1/plates?wait=).
const MaxWait = 5 * time.Minute

// waitTick is how often the plate watch looks at the waited-for plates: a
// tenth of a second adds at most that to a wait, and a plate takes
// seconds.
const waitTick = 100 * time.Millisecond

// watchTimeout bounds one look of the plate watch at the store.
const watchTimeout = 10 * time.Second

// WaitPlate waits until the plate's job has finished (done or failed), d
// has passed, or ctx is done (the caller went away). It returns the
// plate's view when the job finished, nil when it did not finish in time;
// a cancelled ctx is its error.
//
// Waiting is cheap: after one look at the plate, the caller joins the
// service's plate watch, one goroutine that reads the status of every
// plate waited for in one query per waitTick. N waiters cost one query a
// tick and at most one connection, not N (the audit saw 60 waiters that
// each polled the store hold its whole connection pool).
func (s *Service) WaitPlate(ctx context.Context, id string, d time.Duration) (*wire.PlateView, error) {
	p, err := s.store.Plate(ctx, id)
	if err != nil {
		return nil, err // db's error names the plate
	}
	if finished(p.Status) {
		return s.Plate(ctx, id)
	}
	timer := time.NewTimer(d)
	defer timer.Stop()
	done, leave := s.watch.join(id)
	defer leave()
	select {
	case <-ctx.Done():
		return nil, fmt.Errorf("wait for plate %s: %w", id, ctx.Err())
	case <-timer.C:
		return nil, nil
	case err := <-done:
		if err != nil {
			return nil, fmt.Errorf("wait for plate %s: %w", id, err)
		}
		return s.Plate(ctx, id)
	}
}

// finished tells whether a plate's status is final.
func finished(status string) bool { return status == db.PlateDone || status == db.PlateFailed }

// plateWatch tells waiters when their plate's job has finished. One
// goroutine, started by the first waiter and ending when none is left,
// reads the status of every waited-for plate in one query per waitTick
// (db.Store.PlateStatuses).
type plateWatch struct {
	store interface {
		PlateStatuses(ctx context.Context, ids []string) (map[string]string, error)
	}
	log  *slog.Logger
	tick time.Duration

	mu      sync.Mutex
	waiters map[string]map[chan error]struct{} // by plate ID
	running bool
}

func newPlateWatch(store Plates, log *slog.Logger, tick time.Duration) *plateWatch {
	return &plateWatch{store: store, log: log, tick: tick, waiters: map[string]map[chan error]struct{}{}}
}

// join registers a waiter for plate id. done receives nil when the plate's
// job has finished (or the plate is gone), or the store's error; leave
// unregisters the waiter and must be called once it stops waiting.
func (w *plateWatch) join(id string) (done <-chan error, leave func()) {
	c := make(chan error, 1)
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.waiters[id] == nil {
		w.waiters[id] = map[chan error]struct{}{}
	}
	w.waiters[id][c] = struct{}{}
	if !w.running {
		w.running = true
		go w.run()
	}
	return c, func() {
		w.mu.Lock()
		defer w.mu.Unlock()
		delete(w.waiters[id], c)
		if len(w.waiters[id]) == 0 {
			delete(w.waiters, id)
		}
	}
}

// run looks at the waited-for plates every tick until no one waits.
func (w *plateWatch) run() {
	t := time.NewTicker(w.tick)
	defer t.Stop()
	for range t.C {
		ids := w.ids()
		if ids == nil {
			return
		}
		ctx, cancel := context.WithTimeout(context.Background(), watchTimeout)
		st, err := w.store.PlateStatuses(ctx, ids)
		cancel()
		if err != nil {
			w.log.Warn("plate watch", "plates", len(ids), "err", err)
		}
		w.notify(ids, st, err)
	}
}

// ids lists the waited-for plates; nil, and the watch marked stopped, when
// there are none.
func (w *plateWatch) ids() []string {
	w.mu.Lock()
	defer w.mu.Unlock()
	if len(w.waiters) == 0 {
		w.running = false
		return nil
	}
	ids := make([]string, 0, len(w.waiters))
	for id := range w.waiters {
		ids = append(ids, id)
	}
	return ids
}

// notify tells the waiters of each plate of ids that finished (or is not
// found: WaitPlate's own read then says so), or every waiter of ids the
// store's error, and drops them.
func (w *plateWatch) notify(ids []string, st map[string]string, err error) {
	w.mu.Lock()
	defer w.mu.Unlock()
	for _, id := range ids {
		if status, ok := st[id]; err == nil && ok && !finished(status) {
			continue
		}
		for c := range w.waiters[id] {
			c <- err // buffered, and each waiter is told once: it is dropped here
		}
		delete(w.waiters, id)
	}
}
