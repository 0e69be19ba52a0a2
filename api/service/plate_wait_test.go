package service

import (
	"context"
	"errors"
	"fmt"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/plate"
)

// countingStore counts the store reads that waiting makes.
type countingStore struct {
	db.Store
	plate, statuses atomic.Int64
	widest          atomic.Int64 // most IDs in one PlateStatuses
	fail            atomic.Bool  // PlateStatuses fails
}

func (c *countingStore) Plate(ctx context.Context, id string) (*db.Plate, error) {
	c.plate.Add(1)
	return c.Store.Plate(ctx, id)
}

func (c *countingStore) PlateStatuses(ctx context.Context, ids []string) (map[string]string, error) {
	c.statuses.Add(1)
	for {
		w := c.widest.Load()
		if int64(len(ids)) <= w || c.widest.CompareAndSwap(w, int64(len(ids))) {
			break
		}
	}
	if c.fail.Load() {
		return nil, errors.New("store unavailable")
	}
	return c.Store.PlateStatuses(ctx, ids)
}

// submitPlates stores n small plates (no worker takes them).
func submitPlates(t *testing.T, s *Service, n int) []string {
	t.Helper()
	ids := make([]string, n)
	for i := range ids {
		_, acc, err := s.SubmitPlate(context.Background(), Caller{Name: "p", Scope: "submit"}, nil, small96(fmt.Sprintf("W-%d", i)))
		if err != nil {
			t.Fatal(err)
		}
		ids[i] = acc.PlateID
	}
	return ids
}

// Sixty requests waiting for sixty plates cost one status query per tick
// between them, not one each: the store sees about a query per waitTick
// however many wait, every query asks for all the plates, and every
// waiter gets its finished plate.
func TestWaitPlateSharesOnePoll(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		cs := &countingStore{Store: store}
		s := newTestService(t, cs)
		const n = 60
		ids := submitPlates(t, s, n)
		ctx := context.Background()
		var wg sync.WaitGroup
		errs := make(chan error, n)
		for _, id := range ids {
			wg.Go(func() {
				v, err := s.WaitPlate(ctx, id, time.Minute)
				switch {
				case err != nil:
					errs <- err
				case v == nil || v.Status != db.PlateFailed:
					errs <- fmt.Errorf("plate %s: %+v, want it failed", id, v)
				}
			})
		}
		// Let every waiter join, then wait a second of ticks.
		for deadline := time.Now().Add(10 * time.Second); cs.plate.Load() < n; {
			if time.Now().After(deadline) {
				t.Fatalf("%d of %d waiters started", cs.plate.Load(), n)
			}
			time.Sleep(10 * time.Millisecond)
		}
		t0, polls0, reads0 := time.Now(), cs.statuses.Load(), cs.plate.Load()
		time.Sleep(time.Second)
		polls, reads, elapsed := cs.statuses.Load()-polls0, cs.plate.Load()-reads0, time.Since(t0)
		// Finish every plate (as a failed job would) in one write.
		if err := store.Write(ctx, func(w db.Writer) error {
			for _, id := range ids {
				if err := w.FinishPlate(ctx, id, db.PlateFailed, nil, nil, "test"); err != nil {
					return err
				}
			}
			return nil
		}); err != nil {
			t.Fatal(err)
		}
		wg.Wait()
		close(errs)
		for err := range errs {
			t.Error(err)
		}
		// At most one query per tick (+1 for a tick at either end); sixty
		// waiters polling each on their own would make n times as many.
		if limit := int64(elapsed/waitTick) + 2; polls > limit || polls == 0 {
			t.Errorf("%d status queries in %v with %d waiters; want 1..%d (one per %v tick)", polls, elapsed, n, limit, waitTick)
		}
		if reads != 0 {
			t.Errorf("%d plate reads in %v while %d requests waited; want none (they share the status query)", reads, elapsed, n)
		}
		if w := cs.widest.Load(); w != n {
			t.Errorf("widest status query asked for %d plates, want all %d", w, n)
		}
		waitWatchIdle(t, s)
	})
}

// A store error reaches every waiter (once), and the watch stops when no
// one is left.
func TestWaitPlateStoreError(t *testing.T) {
	cs := &countingStore{Store: dbtest.SQLite(t)}
	s := newTestService(t, cs)
	ids := submitPlates(t, s, 3)
	cs.fail.Store(true)
	var wg sync.WaitGroup
	for _, id := range ids {
		wg.Go(func() {
			v, err := s.WaitPlate(context.Background(), id, time.Minute)
			if err == nil || v != nil {
				t.Errorf("plate %s: %+v %v, want the store's error", id, v, err)
			}
		})
	}
	wg.Wait()
	waitWatchIdle(t, s)
}

// A wait that times out answers nil and leaves the watch.
func TestWaitPlateTimesOut(t *testing.T) {
	s := newTestService(t, dbtest.SQLite(t))
	ids := submitPlates(t, s, 1)
	v, err := s.WaitPlate(context.Background(), ids[0], 3*waitTick)
	if v != nil || err != nil {
		t.Fatalf("%+v %v, want nil, nil", v, err)
	}
	waitWatchIdle(t, s)
}

// waitWatchIdle fails unless the watch's goroutine ends within a second
// of its last waiter leaving.
func waitWatchIdle(t *testing.T, s *Service) {
	t.Helper()
	for deadline := time.Now().Add(time.Second); ; time.Sleep(waitTick / 4) {
		s.watch.mu.Lock()
		running, n := s.watch.running, len(s.watch.waiters)
		s.watch.mu.Unlock()
		if !running && n == 0 {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("plate watch still running with %d plates waited for", n)
		}
	}
}

// plateWork counts every curve's fit and bootstrap: 128 curves of 11
// points at 11 levels, Hill (4 parameters), B = 1000 BCa is, by fit.Cost's
// equation, 128 · 11·4·(250 + 1000·8 + 11·8) = 46 959 616 units (main
// lane at the default budget); one such curve alone is 366 872 (small).
func TestPlateWork(t *testing.T) {
	var specs []plate.CurveSpec
	for k := range 128 {
		var c fit.Curve
		for i := range 11 {
			c.Points = append(c.Points, fit.Point{Conc: 1e-10 * float64(int(1)<<i), Response: float64(k)})
		}
		specs = append(specs, plate.CurveSpec{Curve: c})
	}
	boot := &fit.BootSettings{Resamples: 1000}
	if got := plateWork(specs, &fit.Settings{}, boot); got != 46_959_616 {
		t.Errorf("128 curves: %v units, want 46 959 616", got)
	}
	if got := plateWork(specs[:1], &fit.Settings{}, boot); got != 366_872 {
		t.Errorf("1 curve: %v units, want 366 872", got)
	}
	// Fixing bottom and top leaves 2 free parameters: 11·2·(250 + 8000 + 88).
	if got := plateWork(specs[:1], &fit.Settings{Fixed: map[string]float64{"bottom": 0, "top": 100}}, boot); got != 183_436 {
		t.Errorf("2 free parameters: %v units, want 183 436", got)
	}
	b, err := Budget{}.resolve()
	if err != nil {
		t.Fatal(err)
	}
	if b.smallPlate(46_959_616) || !b.smallPlate(366_872) {
		t.Errorf("default budget: 4.7e7 small %v, 3.7e5 small %v; want false, true", b.smallPlate(46_959_616), b.smallPlate(366_872))
	}
	if (Budget{SmallPlate: -1}).smallPlate(1) {
		t.Error("SmallPlate < 0 still sends plates to the small lane")
	}
}
