package potency

import "time"

// Activity is a curve's activity call.
type Activity string

// The activity calls.
const (
	Active       Activity = "active"
	Inactive     Activity = "inactive"
	Inconclusive Activity = "inconclusive"
)

// Qualifier says whether a potency is a value or a bound: "=" for an EC50
// inside the tested range, ">" or "<" for one beyond it (then LogEC50 is the
// bound, the highest or lowest tested concentration).
type Qualifier string

// The qualifiers.
const (
	Equal   Qualifier = "="
	Greater Qualifier = ">"
	Less    Qualifier = "<"
)

// Run is one stored curve of a compound as the history sees it: the caller
// maps its stored rows to these plain records.
type Run struct {
	// LogEC50 is log10 of the EC50 (or IC50) in M. It must be finite for
	// an active run with qualifier "="; it is not read for other runs (NaN
	// is fine for an inactive curve, which reports no EC50).
	LogEC50 float64
	// Activity is the curve's call; it must be one of the three.
	Activity Activity
	// Qualifier must be "=", ">" or "<" for an active run; it is not read
	// for other runs.
	Qualifier Qualifier
	// Rejected: the curve's latest review decision is "rejected".
	Rejected bool
	// Superseded: a later version of the curve (a refit) exists; only the
	// latest version of a curve counts.
	Superseded bool
	// PlateQCFailed: the curve comes from a plate that failed QC.
	PlateQCFailed bool
	// MeasuredAt is the experiment time; it orders the runs for the MSR
	// window (runs with equal times keep their order in the input).
	MeasuredAt time.Time
}

// Reason says why a run is not usable; Usable (the empty string) when it is.
type Reason string

// The reasons, in the order Classify tests them: the first that applies is
// the run's reason.
const (
	Usable Reason = ""
	// Superseded first: an old version of a curve is not a run of its own,
	// whatever else is true of it.
	ReasonSuperseded Reason = "superseded"
	// Then the scientist's decision.
	ReasonRejected Reason = "rejected"
	// Then the plate (unless HistorySettings.IncludeFailedPlates).
	ReasonPlateQCFailed Reason = "plate_qc_failed"
	// Then the curve's own call and qualifier.
	ReasonInactive     Reason = "inactive"
	ReasonInconclusive Reason = "inconclusive"
	ReasonQualified    Reason = "qualified"
)

// Excluded counts the runs left out of a summary, by reason; each run
// counts once, under its first reason.
type Excluded struct {
	Superseded    int
	Rejected      int
	PlateQCFailed int
	Inactive      int
	Inconclusive  int
	Qualified     int
}

// Total is the number of excluded runs.
func (e Excluded) Total() int {
	return e.Superseded + e.Rejected + e.PlateQCFailed + e.Inactive + e.Inconclusive + e.Qualified
}

func (e *Excluded) add(r Reason) {
	switch r {
	case ReasonSuperseded:
		e.Superseded++
	case ReasonRejected:
		e.Rejected++
	case ReasonPlateQCFailed:
		e.PlateQCFailed++
	case ReasonInactive:
		e.Inactive++
	case ReasonInconclusive:
		e.Inconclusive++
	case ReasonQualified:
		e.Qualified++
	}
}

// Classify gives the run's reason for exclusion, or Usable: a run is usable
// when it is the latest version, not rejected, from a plate that passed QC
// (or includeFailedPlates), active, and qualified "=". It does not check
// the run (see Summarize).
func Classify(r Run, includeFailedPlates bool) Reason {
	switch {
	case r.Superseded:
		return ReasonSuperseded
	case r.Rejected:
		return ReasonRejected
	case r.PlateQCFailed && !includeFailedPlates:
		return ReasonPlateQCFailed
	case r.Activity == Inactive:
		return ReasonInactive
	case r.Activity == Inconclusive:
		return ReasonInconclusive
	case r.Qualifier != Equal:
		return ReasonQualified
	}
	return Usable
}

// check validates run i of a history.
func (r Run) check(i int) error {
	switch r.Activity {
	case Active, Inactive, Inconclusive:
	default:
		return fieldErr(indexed("runs", i)+".activity", "must be active, inactive or inconclusive, got %q", r.Activity)
	}
	if r.Activity != Active {
		return nil
	}
	switch r.Qualifier {
	case Equal, Greater, Less:
	default:
		return fieldErr(indexed("runs", i)+".qualifier", `must be "=", ">" or "<" for an active run, got %q`, r.Qualifier)
	}
	if r.Qualifier == Equal && !finite(r.LogEC50) {
		return fieldErr(indexed("runs", i)+".log_ec50", "must be finite for an active run qualified \"=\", got %v", r.LogEC50)
	}
	return nil
}
