package fit

import (
	"context"
	"errors"
	"fmt"
	"runtime"

	"sluice/fit/boot"
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
//
// progress, when not nil, counts finished curves and refitted resamples;
// the fitting goroutines only add to it atomically, and the caller reads it
// from its own goroutine (see Progress).
//
// ctx is checked before each curve and, inside a curve's bootstrap, before
// each chunk of boot.Chunk resamples: when it is done, FitBatch returns an
// error wrapping ctx.Err() within one chunk per worker, and no results. A
// panic while fitting a curve is returned as an error wrapping a
// *boot.PanicError whose Index is the curve's position (in its bootstrap:
// the resample's).
func FitBatch(ctx context.Context, curves []Curve, s *Settings, bs *BootSettings, workers int, progress *Progress) ([]*Result, error) {
	set, err := s.resolve()
	if err != nil {
		return nil, err
	}
	var bset BootSettings
	if bs != nil {
		if bset, err = bs.resolve(); err != nil {
			return nil, err
		}
	}
	designs := make([]*design, len(curves))
	for i, c := range curves {
		if err := validatePoints(c.Points); err != nil {
			return nil, &CurveError{Index: i, ID: c.ID, Err: err}
		}
		designs[i] = newDesign(c.Points)
		if bs != nil {
			if err := checkScheme(bset, designs[i]); err != nil {
				return nil, &CurveError{Index: i, ID: c.ID, Err: err}
			}
		}
	}
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	outer := min(workers, len(curves))
	bset.Workers = max(1, workers/max(outer, 1))
	results := make([]*Result, len(curves))
	// A failed bootstrap (cancelled, or a refit panicked) stops the batch
	// through cctx, and its error is the cause.
	cctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)
	// Curves are handed out one at a time: a curve with its bootstrap is
	// a large item, and the bootstrap checks the context itself.
	err = boot.RunChunked(cctx, len(curves), outer, 1, func() func(int) {
		return func(i int) {
			r := fitDesign(curves[i].ID, set, designs[i])
			if bs != nil {
				if err := r.bootstrap(cctx, bset, progress); err != nil {
					cancel(err)
					return
				}
			}
			results[i] = r
			progress.AddCurve()
		}
	})
	if err != nil {
		if _, ok := errors.AsType[*boot.PanicError](err); !ok {
			// ctx's own error when the caller cancelled (its cause may be
			// any error), else the bootstrap's.
			if err = ctx.Err(); err == nil {
				err = context.Cause(cctx)
			}
		}
		return nil, fmt.Errorf("fit batch: %w", err)
	}
	return results, nil
}
