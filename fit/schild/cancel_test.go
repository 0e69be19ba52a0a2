package schild

import (
	"context"
	"errors"
	"math/rand/v2"
	"runtime"
	"testing"

	"go.uber.org/goleak"

	"sluice/fit"
	"sluice/fit/boot"
)

// A Schild analysis cancelled during its bootstrap returns an error
// wrapping context.Canceled and no result, within one chunk per worker,
// and leaves no goroutine behind.
func TestAnalyzeCancelledWithinOneChunk(t *testing.T) {
	defer goleak.VerifyNone(t)
	cs := gaddumData(rand.New(rand.NewPCG(9, 9)), 8, 1, 4, 2)
	const B = fit.MaxResamples
	for _, workers := range []int{1, 2} {
		ctx, cancel := context.WithCancel(context.Background())
		var prog fit.Progress
		atCancel := make(chan int, 1)
		go func() {
			for prog.Resamples() < 2*boot.Chunk {
				runtime.Gosched()
			}
			cancel()
			atCancel <- prog.Resamples()
		}()
		r, err := Analyze(ctx, cs, &Settings{Resamples: B, Seed: 1, Workers: workers, Progress: &prog})
		cancel()
		if !errors.Is(err, context.Canceled) || r != nil {
			t.Fatalf("workers %d: err = %v, result %v; want context.Canceled and none", workers, err, r != nil)
		}
		done, c0 := prog.Resamples(), <-atCancel
		if done-c0 > workers*boot.Chunk || done > B/2 {
			t.Errorf("workers %d: %d resamples done, %d when cancelled (chunk %d)", workers, done, c0, boot.Chunk)
		}
	}
	// A context done before the start stops before the first fit.
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Analyze(ctx, cs, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("done context: err = %v", err)
	}
}
