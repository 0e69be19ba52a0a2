package service

import (
	"time"

	"sluice/db"
	"sluice/fit"
	"sluice/fit/cost"
	"sluice/fit/plate"
)

// Scaling of a queued job's timeout to its work.
const (
	// jobTimeoutBase is the part of a job's timeout that does not scale:
	// reading the plate, storing the curves, a slow database.
	jobTimeoutBase = 30 * time.Second
	// jobTimeoutFactor is how many times the cost model's single-core
	// time a job may take before its attempt is cut off. The estimate is
	// single-core although a job fits on every core, and a worker runs two
	// jobs at once on shared cores; a hard dataset (refits restarting from
	// the self-start values) can exceed it several times (package cost).
	// A design choice, not a measurement: ten times leaves room for all of
	// these at once.
	jobTimeoutFactor = 10
)

// JobTimeout is the timeout of one attempt at a queued job of work w:
//
//	T = 30 s + 10 · w.Seconds()
//
// (jobTimeoutBase, jobTimeoutFactor; w.Seconds() is the cost model's
// single-core time). The queue clamps it to [db.MinJobTimeout, its
// ceiling] (--job-timeout). A 96-well plate with B = 1000 gets about
// 31 s; a job that would take a minute of one core gets 10.5 min, the
// ceiling by default.
func JobTimeout(w cost.Work) time.Duration {
	t := jobTimeoutBase + time.Duration(jobTimeoutFactor*w.Seconds()*float64(time.Second))
	if t < jobTimeoutBase { // overflow of an absurd estimate
		return 0 // the queue's ceiling
	}
	return t
}

// jobOpts are the queue settings of a job of work w.
func jobOpts(w cost.Work) db.JobOpts { return db.JobOpts{Timeout: JobTimeout(w)} }

// plateWork is the cost model's estimate of a plate job's work: the fits
// of its curves (fit.CostOf, by the model's free parameters) with their
// bootstrap. Plate QC and normalisation are cheap next to them.
func plateWork(curves []plate.CurveSpec, fs *fit.Settings, bs *fit.BootSettings) cost.Work {
	cs := make([]fit.Curve, len(curves))
	for i, c := range curves {
		cs[i] = c.Curve
	}
	return fit.CostOf(cs, freeParams(fs), bs)
}

// freeParams is the number of parameters fs estimates (its model's, less
// the fixed ones); fs has been validated, so its model is known.
func freeParams(fs *fit.Settings) int {
	m, err := fit.ParseModel(string(fs.Model))
	if err != nil {
		return 4
	}
	n := 0
	for _, p := range m.Params() {
		if _, fixed := fs.Fixed[p]; !fixed {
			n++
		}
	}
	return n
}
