package fit

import (
	"context"
	"fmt"
	"runtime"
	"sync"
	"sync/atomic"
)

// CurveError says which curve of a batch has invalid input.
type CurveError struct {
	Index int    // position in the batch
	ID    string // the curve's ID
	Err   error
}

func (e *CurveError) Error() string {
	if e.ID != "" {
		return fmt.Sprintf("curve %q: %v", e.ID, e.Err)
	}
	return fmt.Sprintf("curve %d: %v", e.Index, e.Err)
}

func (e *CurveError) Unwrap() error { return e.Err }

// FitBatch fits every curve and, when bs is not nil, bootstraps every
// converged fit. Curves run in parallel on workers goroutines (0 means
// GOMAXPROCS); when there are fewer curves than workers, each bootstrap uses
// the spare workers instead. Results are in input order and, for a given
// seed, identical for any number of workers. Every curve is validated before
// any is fitted, so invalid input returns a *CurveError and no results.
// progress, when not nil, is called after each curve with the number done.
//
// When ctx is done, curves not yet started are skipped and ctx.Err() is
// returned with no results.
func FitBatch(ctx context.Context, curves []Curve, s *Settings, bs *BootSettings, workers int, progress func(done int)) ([]*Result, error) {
	set, err := s.resolve()
	if err != nil {
		return nil, err
	}
	var boot BootSettings
	if bs != nil {
		if boot, err = bs.resolve(); err != nil {
			return nil, err
		}
	}
	designs := make([]*design, len(curves))
	for i, c := range curves {
		if err := validatePoints(c.Points); err != nil {
			return nil, &CurveError{Index: i, ID: c.ID, Err: err}
		}
		designs[i] = newDesign(c.Points)
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	outer := min(workers, len(curves))
	boot.Workers = max(1, workers/max(outer, 1))
	results := make([]*Result, len(curves))
	var next, done atomic.Int64
	var wg sync.WaitGroup
	var mu sync.Mutex
	for w := 0; w < outer; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for {
				i := int(next.Add(1)) - 1
				if i >= len(curves) || ctx.Err() != nil {
					return
				}
				r := fitDesign(curves[i].ID, set, designs[i])
				if bs != nil {
					b := boot
					Bootstrap(r, &b) // settings already validated: no error
				}
				results[i] = r
				if progress != nil {
					n := int(done.Add(1))
					mu.Lock()
					progress(n)
					mu.Unlock()
				}
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	return results, nil
}
