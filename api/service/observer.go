package service

import "time"

// Observer is told what the use cases did, for metrics; the API's
// Prometheus collectors implement it, so this package needs neither.
type Observer interface {
	// CurveFitted: one curve fitted (bootstrap included) in d.
	CurveFitted(model, status string, d time.Duration, resamples, failedRefits int)
	// PlateCurveFitted: one curve of a plate fitted; its own time is not
	// known (a plate's curves are fitted side by side, see PlateFitted).
	PlateCurveFitted(model, status string, resamples, failedRefits int)
	// PlateFitted: every curve of a plate fitted in d.
	PlateFitted(d time.Duration)
}

// noObserver observes nothing.
type noObserver struct{}

func (noObserver) CurveFitted(string, string, time.Duration, int, int) {}
func (noObserver) PlateCurveFitted(string, string, int, int)           {}
func (noObserver) PlateFitted(time.Duration)                           {}
