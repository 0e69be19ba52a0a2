package fit

import "sync/atomic"

// Progress counts the work a running FitBatch (or Schild analysis) has
// finished. The fitting goroutines only add to it, atomically; a caller
// that reports progress reads it from its own goroutine, e.g. on a ticker,
// so that no I/O ever runs on a fitting goroutine. The zero value is ready
// to use; a nil *Progress counts nothing.
type Progress struct {
	curves, resamples atomic.Int64
}

// Curves returns the number of curves finished (fitted and, when asked,
// bootstrapped).
func (p *Progress) Curves() int { return int(p.curves.Load()) }

// Resamples returns the number of bootstrap resamples refitted so far.
func (p *Progress) Resamples() int { return int(p.resamples.Load()) }

// AddCurve counts one finished curve.
func (p *Progress) AddCurve() {
	if p != nil {
		p.curves.Add(1)
	}
}

// AddResample counts one refitted resample.
func (p *Progress) AddResample() {
	if p != nil {
		p.resamples.Add(1)
	}
}
