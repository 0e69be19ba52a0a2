package service

import (
	"errors"

	"sluice/fit/cost"
)

// Budget bounds the work of one request, in the units of the numerics'
// cost model (package fit/cost: fit.Cost, schild.Cost, membrane.Cost; one
// unit is about cost.NanosecondsPerUnit of one core).
type Budget struct {
	// Sync is the most work a request may do before it answers; a request
	// over it goes to the job queue. Zero means DefaultSyncBudget; range
	// (0, Hard].
	Sync cost.Work
	// Hard is the most work any request may ask for; over it the request
	// is refused with ErrTooMuchWork naming the field that drives the
	// cost. Zero means DefaultHardLimit; range [Sync, +Inf).
	Hard cost.Work
	// SmallPlate is the most work (plateWork: fit.Cost over the plate's
	// curves) of a plate whose job waits in the queue's small-job lane
	// (db.QueueSmall), which has workers of its own, so that small plates
	// never queue behind large ones. Zero means Sync (a plate no larger
	// than a synchronous request: a 384-well plate of 32 curves with
	// B = 1000 is about 1.1e7 units, a 1536-well one of 128 curves about
	// 4.7e7); negative sends every plate to the main lane.
	SmallPlate cost.Work
}

// Default budgets, at cost.NanosecondsPerUnit = 40: about 1 s of one core
// for a synchronous answer (a B = 1000 bootstrap of a 30-point curve is
// about 3.4e5 units, 14 ms), and about 30 s for any request (a potential
// band over 1 000 draws at 10 000 concentrations with the Mg²⁺ block is
// about 1.4e9 units; B = 100 000 on 100 000 levels would take days).
const (
	DefaultSyncBudget cost.Work = 25_000_000
	DefaultHardLimit  cost.Work = 750_000_000
)

func (b Budget) resolve() (Budget, error) {
	if b.Sync == 0 {
		b.Sync = DefaultSyncBudget
	}
	if b.Hard == 0 {
		b.Hard = DefaultHardLimit
	}
	if b.SmallPlate == 0 {
		b.SmallPlate = b.Sync
	}
	if !(b.Sync > 0) || !(b.Hard >= b.Sync) {
		return b, errors.New("service: Budget: want 0 < Sync ≤ Hard")
	}
	return b, nil
}

// admit refuses work over the hard limit with ErrTooMuchWork naming the
// field that drives it. (Work over Sync is the use case's to queue: see
// queue.go.)
func (b Budget) admit(w cost.Work, field string) error {
	if w > b.Hard {
		return TooMuchWork(field, "this request is about %.3g units of work (%.0f s of one core), more than the limit of %.3g; "+
			"reduce %s", float64(w), w.Seconds(), float64(b.Hard), field)
	}
	return nil
}

// smallPlate tells whether a plate of work w goes to the queue's
// small-job lane (Budget.SmallPlate).
func (b Budget) smallPlate(w cost.Work) bool {
	return b.SmallPlate >= 0 && w <= b.SmallPlate
}
