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
	// DriftViolation: one rule violation recorded on an assay's chart
	// (once per violation, never for a replay).
	DriftViolation(assayID, metric, rule string)
	// AssayDrift: an assay's charts were evaluated; outOfControl when any
	// chart is out of control.
	AssayDrift(assayID string, outOfControl bool)
}

// noObserver observes nothing.
type noObserver struct{}

func (noObserver) CurveFitted(string, string, time.Duration, int, int) {}
func (noObserver) PlateCurveFitted(string, string, int, int)           {}
func (noObserver) PlateFitted(time.Duration)                           {}
func (noObserver) DriftViolation(string, string, string)               {}
func (noObserver) AssayDrift(string, bool)                             {}
