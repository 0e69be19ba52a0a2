package boot

import (
	"runtime"
	"sync"
	"sync/atomic"
)

// Run calls the resample functions for b = 0 … n−1 on the given number of
// goroutines (0 means runtime.GOMAXPROCS(0)). newWorker is called once per
// goroutine and returns the function that does resample b with that
// goroutine's private buffers. As long as resample b depends only on b (seed
// its randomness with Stream.Reset and write its output to slot b), the
// results are bit-identical for any number of workers.
func Run(n, workers int, newWorker func() func(b int)) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	if workers > n {
		workers = n
	}
	if workers <= 1 {
		if n > 0 {
			do := newWorker()
			for b := 0; b < n; b++ {
				do(b)
			}
		}
		return
	}
	// Hand out resamples in chunks: few enough atomics to be cheap, small
	// enough to balance uneven refit times.
	const chunk = 16
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		do := newWorker()
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				lo := int(next.Add(chunk)) - chunk
				if lo >= n {
					return
				}
				for b := lo; b < min(lo+chunk, n); b++ {
					do(b)
				}
			}
		}()
	}
	wg.Wait()
}
