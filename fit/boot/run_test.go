package boot

import (
	"context"
	"errors"
	"sync/atomic"
	"testing"

	"go.uber.org/goleak"
)

// Every test of the package ends with no goroutine of Run left behind.
func TestMain(m *testing.M) { goleak.VerifyTestMain(m) }

// Every resample runs exactly once, whatever the number of workers and
// chunk size.
func TestRunEveryResampleOnce(t *testing.T) {
	for _, n := range []int{0, 1, 15, 16, 17, 100, 1000} {
		for _, workers := range []int{0, 1, 2, 3, 8} {
			for _, chunk := range []int{1, 7, Chunk} {
				hits := make([]atomic.Int32, n)
				err := RunChunked(context.Background(), n, workers, chunk, func() func(int) {
					return func(b int) { hits[b].Add(1) }
				})
				if err != nil {
					t.Fatalf("n %d workers %d chunk %d: %v", n, workers, chunk, err)
				}
				for b := range hits {
					if h := hits[b].Load(); h != 1 {
						t.Fatalf("n %d workers %d chunk %d: resample %d ran %d times", n, workers, chunk, b, h)
					}
				}
			}
		}
	}
}

// A run cancelled from inside resample 40 stops after the chunks already
// handed out: at most one chunk per worker beyond the one that cancelled.
// Counted are the resamples that start once cancel has returned: before
// that, other workers run on as long as the scheduler lets them.
func TestRunCancelWithinOneChunk(t *testing.T) {
	const n = 100000
	for _, workers := range []int{1, 2, 4} {
		ctx, cancel := context.WithCancel(context.Background())
		var done atomic.Int64
		var cancelled atomic.Bool
		err := Run(ctx, n, workers, func() func(int) {
			return func(b int) {
				if cancelled.Load() {
					done.Add(1)
				}
				if b == 40 {
					cancel()
					cancelled.Store(true)
				}
			}
		})
		cancel()
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("workers %d: err = %v, want context.Canceled", workers, err)
		}
		// After the cancel each worker finishes at most the chunk it holds.
		if d := done.Load(); d > int64((workers+1)*Chunk) {
			t.Errorf("workers %d: %d resamples ran after cancelling at 40 (chunk %d)", workers, d, Chunk)
		}
	}
}

// An already cancelled context runs nothing.
func TestRunCancelledBeforeStart(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	var done atomic.Int64
	err := Run(ctx, 1000, 2, func() func(int) { return func(int) { done.Add(1) } })
	if !errors.Is(err, context.Canceled) || done.Load() != 0 {
		t.Errorf("err %v, %d resamples ran", err, done.Load())
	}
}

// A panic in a resample is an error naming the resample, on one worker and
// on several, and the other workers stop.
func TestRunPanicBecomesError(t *testing.T) {
	sentinel := errors.New("bad resample")
	for _, workers := range []int{1, 2, 4} {
		var done atomic.Int64
		var panicked atomic.Bool
		err := Run(context.Background(), 100000, workers, func() func(int) {
			return func(b int) {
				if panicked.Load() {
					done.Add(1)
				}
				if b == 123 {
					panicked.Store(true)
					panic(sentinel)
				}
			}
		})
		var pe *PanicError
		if !errors.As(err, &pe) {
			t.Fatalf("workers %d: err = %v, want a *PanicError", workers, err)
		}
		if pe.Index != 123 || !errors.Is(err, sentinel) || len(pe.Stack) == 0 {
			t.Errorf("workers %d: %+v", workers, pe)
		}
		// One worker stops at the panic. Several stop once the panicking
		// one has recorded it (its deferred recover): how many resamples
		// the others start in between depends on the scheduler (up to
		// ~30 000 of these no-op resamples under the race detector on two
		// loaded cores), so the schedule-free check is that the run ends
		// long before its 100 000 resamples.
		if d := done.Load(); (workers == 1 && d != 0) || d > 100000/2 {
			t.Errorf("workers %d: %d resamples ran after the panic at 123", workers, d)
		}
	}
}

// A panic while making a worker is an error too (Index −1), and the other
// workers stop.
func TestRunNewWorkerPanic(t *testing.T) {
	for _, workers := range []int{1, 3} {
		var made atomic.Int32
		err := Run(context.Background(), 1000, workers, func() func(int) {
			if made.Add(1) == 1 {
				panic("no buffers")
			}
			return func(int) {}
		})
		var pe *PanicError
		if !errors.As(err, &pe) || pe.Index != -1 || pe.Value != "no buffers" {
			t.Errorf("workers %d: err = %v, want a *PanicError at -1", workers, err)
		}
	}
}
