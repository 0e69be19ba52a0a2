package service

import (
	"errors"
	"math"
)

// Budget bounds the work of one request, in the units of the cost
// functions of the numerics (fit.Cost, schild.Cost, membrane.Cost).
type Budget struct {
	// Sync is the most work a request may do before it answers; a request
	// over it goes to the job queue. Zero means DefaultSyncBudget; range
	// (0, Hard].
	Sync float64
	// Hard is the most work any request may ask for; over it the request
	// is refused with ErrTooMuchWork naming the field that drives the
	// cost. Zero means DefaultHardLimit; range [Sync, +Inf).
	Hard float64
}

// Default budgets. Provisional until the cost functions land: no request
// is over them.
const (
	DefaultSyncBudget = math.MaxFloat64
	DefaultHardLimit  = math.MaxFloat64
)

func (b Budget) resolve() (Budget, error) {
	if b.Sync == 0 {
		b.Sync = DefaultSyncBudget
	}
	if b.Hard == 0 {
		b.Hard = DefaultHardLimit
	}
	if !(b.Sync > 0) || !(b.Hard >= b.Sync) {
		return b, errors.New("service: Budget: want 0 < Sync ≤ Hard")
	}
	return b, nil
}
