package fit

import (
	"context"
	"errors"
	"math/rand/v2"
	"runtime"
	"sync/atomic"
	"testing"

	"go.uber.org/goleak"

	"sluice/fit/boot"
)

// cancelWhen cancels ctx from its own goroutine once counted() reaches at,
// and returns what counted() said just after cancelling (every unit of work
// counted later belongs to a chunk a worker held when the context was
// cancelled). Call the returned function after the run to get that figure.
func cancelWhen(cancel context.CancelFunc, counted func() int, at int) func() int {
	ch := make(chan int, 1)
	go func() {
		for counted() < at {
			runtime.Gosched()
		}
		cancel()
		ch <- counted()
	}()
	return func() int { return <-ch }
}

// A bootstrap cancelled mid-run returns an error wrapping context.Canceled
// within one chunk per worker, leaves the result untouched, and leaves no
// goroutine behind.
func TestBootstrapCancelledWithinOneChunk(t *testing.T) {
	defer goleak.VerifyNone(t)
	rng := rand.New(rand.NewPCG(1, 2))
	c := simulatedCurve(rng, []float64{0, 100, -7, 1}, 5)
	const B = 50000
	for _, workers := range []int{1, 2} {
		r, err := Fit(c, nil)
		if err != nil {
			t.Fatal(err)
		}
		s, _ := (&BootSettings{Resamples: B, Seed: 3, Workers: workers}).resolve()
		ctx, cancel := context.WithCancel(context.Background())
		var prog Progress
		atCancel := cancelWhen(cancel, prog.Resamples, 3*boot.Chunk)
		err = r.bootstrap(ctx, s, &prog)
		cancel()
		if !errors.Is(err, context.Canceled) {
			t.Fatalf("workers %d: err = %v, want context.Canceled", workers, err)
		}
		done, c0 := prog.Resamples(), atCancel()
		if done-c0 > workers*boot.Chunk || done > B/2 {
			t.Errorf("workers %d: %d resamples done, %d when cancelled (chunk %d)", workers, done, c0, boot.Chunk)
		}
		if r.Boot != nil || r.Params[2].BootLo == r.Params[2].BootLo {
			t.Errorf("workers %d: a cancelled bootstrap changed the result", workers)
		}
		// The public entry point says the same of a context already done.
		if err := Bootstrap(ctx, r, &BootSettings{Resamples: B}); !errors.Is(err, context.Canceled) || r.Boot != nil {
			t.Errorf("workers %d: Bootstrap with a done context: %v", workers, err)
		}
	}
}

// A FitBatch cancelled inside a curve's bootstrap returns an error wrapping
// context.Canceled and no results, within one chunk per worker, with one
// curve (each bootstrap uses every worker) and with several.
func TestFitBatchCancelledWithinOneChunk(t *testing.T) {
	defer goleak.VerifyNone(t)
	rng := rand.New(rand.NewPCG(3, 4))
	const B = 20000
	for _, n := range []int{1, 6} {
		curves := make([]Curve, n)
		for i := range curves {
			curves[i] = simulatedCurve(rng, []float64{0, 100, -7, 1}, 5)
		}
		const workers = 2
		ctx, cancel := context.WithCancel(context.Background())
		var prog Progress
		atCancel := cancelWhen(cancel, prog.Resamples, 3*boot.Chunk)
		res, err := FitBatch(ctx, curves, nil, &BootSettings{Resamples: B, Seed: 1}, workers, &prog)
		cancel()
		if !errors.Is(err, context.Canceled) || res != nil {
			t.Fatalf("%d curves: err = %v, %d results; want context.Canceled and none", n, err, len(res))
		}
		done, c0 := prog.Resamples(), atCancel()
		if done-c0 > workers*boot.Chunk || done > n*B/2 {
			t.Errorf("%d curves: %d resamples done, %d when cancelled (chunk %d)", n, done, c0, boot.Chunk)
		}
		if prog.Curves() != 0 {
			t.Errorf("%d curves: %d finished curves counted after a cancel before the first ended", n, prog.Curves())
		}
	}
}

// Progress counts every curve and every resample of a batch that runs to
// the end.
func TestFitBatchProgressCounts(t *testing.T) {
	defer goleak.VerifyNone(t)
	rng := rand.New(rand.NewPCG(5, 6))
	curves := make([]Curve, 5)
	for i := range curves {
		curves[i] = simulatedCurve(rng, []float64{0, 100, -7, 1}, 5)
	}
	var prog Progress
	res, err := FitBatch(context.Background(), curves, nil, &BootSettings{Resamples: 100, Interval: IntervalPercentile}, 2, &prog)
	if err != nil {
		t.Fatal(err)
	}
	boots := 0
	for _, r := range res {
		if r.Boot != nil {
			boots++
		}
	}
	if prog.Curves() != len(curves) || prog.Resamples() != 100*boots {
		t.Errorf("progress %d curves, %d resamples; want %d and %d", prog.Curves(), prog.Resamples(), len(curves), 100*boots)
	}
}

// A model that panics in the middle of a batch's bootstraps makes FitBatch
// return an error wrapping a *boot.PanicError, on one worker and on
// several, instead of crashing the process; no goroutine is left behind.
func TestFitBatchPanicBecomesError(t *testing.T) {
	defer goleak.VerifyNone(t)
	rng := rand.New(rand.NewPCG(7, 8))
	curves := make([]Curve, 4)
	for i := range curves {
		curves[i] = simulatedCurve(rng, []float64{0, 100, -7, 1}, 5)
	}
	// The 200th model evaluation is in a first fit, the 20 000th in a
	// bootstrap.
	for _, c := range []struct{ workers, at int }{{1, 200}, {2, 200}, {1, 20000}, {2, 20000}, {4, 20000}} {
		workers := c.workers
		var calls atomic.Int64
		spec := *hillSpec()
		spec.name = "hill_with_a_bug"
		hill := spec.curve
		spec.curve = func(theta []float64, x float64, grad []float64) float64 {
			if calls.Add(1) == int64(c.at) {
				panic("model bug")
			}
			return hill(theta, x, grad)
		}
		reg, err := NewRegistry(&spec)
		if err != nil {
			t.Fatal(err)
		}
		res, err := FitBatch(context.Background(), curves, &Settings{Models: reg, Model: spec.name},
			&BootSettings{Resamples: 1000, Seed: 1}, workers, nil)
		var pe *boot.PanicError
		if !errors.As(err, &pe) || pe.Value != "model bug" || res != nil {
			t.Fatalf("workers %d, panic at %d: err = %v, %d results; want a *boot.PanicError and none", workers, c.at, err, len(res))
		}
	}
}

// A caller that cancels with a cause of its own still gets an error that
// wraps context.Canceled.
func TestFitBatchCancelledWithCause(t *testing.T) {
	defer goleak.VerifyNone(t)
	rng := rand.New(rand.NewPCG(9, 10))
	curves := []Curve{simulatedCurve(rng, []float64{0, 100, -7, 1}, 5), simulatedCurve(rng, []float64{0, 100, -6, 1}, 5)}
	ctx, cancel := context.WithCancelCause(context.Background())
	var prog Progress
	atCancel := cancelWhen(func() { cancel(errors.New("shutting down")) }, prog.Resamples, boot.Chunk)
	_, err := FitBatch(ctx, curves, nil, &BootSettings{Resamples: 20000, Seed: 1}, 2, &prog)
	atCancel()
	if !errors.Is(err, context.Canceled) {
		t.Errorf("err = %v, want context.Canceled", err)
	}
}
