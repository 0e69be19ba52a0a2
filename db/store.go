package db

import (
	"context"
	"time"
)

// Store is the persistence the service needs: the small interfaces below,
// one per kind of caller, composed. Reads run outside transactions; every
// write runs inside Write, all or nothing. Consumers should declare the
// few methods they use (or take one of these interfaces), not Store.
type Store interface {
	Transactor
	Catalogue
	Results
	Plates
	Tokens
	Sessions
	AuditLog
	Idempotency
	Jobs
	Health
	Loader
	// Close releases the engine's connections.
	Close()
}

// Transactor runs writes.
type Transactor interface {
	// Write runs fn once, in one transaction on either engine, committed
	// when fn returns nil and rolled back otherwise. Each Writer call's
	// error reaches fn as it happens, with the same category and text on
	// both engines, except for the calls marked "held back" below, whose
	// error may come from a later call or from Write itself (PostgreSQL
	// sends them with the next round trip). An ErrExists from any other
	// Insert* call (the key is taken; nothing was written) leaves the
	// write usable: fn may go on or give up. Any other error aborts the
	// write: later calls return it again, and Write returns it and rolls
	// back even if fn swallowed it.
	Write(ctx context.Context, fn func(Writer) error) error
}

// Catalogue reads assays and compounds.
type Catalogue interface {
	Assay(ctx context.Context, id string) (*Assay, error)
	// Assays lists every assay by ID.
	Assays(ctx context.Context) ([]Assay, error)
	Compound(ctx context.Context, id string) (*Compound, error)
	// Compounds lists every compound by ID.
	Compounds(ctx context.Context) ([]Compound, error)
}

// Results reads stored analyses: single fits and Schild runs.
type Results interface {
	FitRun(ctx context.Context, id string) (*FitRun, error)
	// FitRuns lists runs newest first and returns the cursor of the next
	// page ("" on the last).
	FitRuns(ctx context.Context, f FitFilter) (runs []FitRun, next string, err error)
	// CurveResult returns a stored curve result of either kind.
	CurveResult(ctx context.Context, id string) (*CurveResult, error)
	// CompoundCurves returns a compound's curve results, single fits and
	// plate curves alike, oldest experiment (measured_at) first.
	CompoundCurves(ctx context.Context, f CurveFilter) ([]CurveResult, error)
	SchildRun(ctx context.Context, id string) (*SchildRun, error)
	// Analysis returns a queued single analysis.
	Analysis(ctx context.Context, id string) (*Analysis, error)
	// PlateSchildRuns lists a plate's Schild runs by agonist, antagonist.
	PlateSchildRuns(ctx context.Context, plateID string) ([]SchildRun, error)
	Potency
}

// Potency reads potency histories: curves as potency rows, their review
// events and refits, and replicate-experiment studies.
type Potency interface {
	// CompoundPotency returns a compound's curves, oldest experiment first.
	CompoundPotency(ctx context.Context, f PotencyFilter) ([]PotencyRow, error)
	// AssayCompounds pages through the compounds with curves in an assay.
	AssayCompounds(ctx context.Context, assayID, after string, limit int, desc bool) ([]string, error)
	// AssayPotency returns the curves of some compounds in an assay.
	AssayPotency(ctx context.Context, assayID string, compoundIDs []string) ([]PotencyRow, error)
	CurvePotency(ctx context.Context, id string) (*PotencyRow, error)
	// PotencySummaries pages through an assay's stored compound summaries.
	PotencySummaries(ctx context.Context, p PotencyPage) ([]PotencySummary, error)
	// PotencyStale reports whether a write has left any of the assay's
	// summaries out of date.
	PotencyStale(ctx context.Context, assayID string) (bool, error)
	// UnreviewedCurves returns the newest curves never reviewed nor
	// superseded, at most limit.
	UnreviewedCurves(ctx context.Context, limit int) ([]PotencyRow, error)
	// Reviews returns the curves' review events, oldest first per curve.
	Reviews(ctx context.Context, curveIDs []string) ([]Review, error)
	CurveRefit(ctx context.Context, id string) (*Refit, error)
	MSRStudy(ctx context.Context, id string) (*MSRStudy, error)
}

// Plates reads plates, their wells, curves and layouts, and records a
// running job's progress.
type Plates interface {
	Plate(ctx context.Context, id string) (*Plate, error)
	PlateByJob(ctx context.Context, jobID int64) (*Plate, error)
	// PlateStatuses returns the status of each existing plate of ids, by
	// ID (one statement per 500 IDs): the shared poll of waiting requests.
	PlateStatuses(ctx context.Context, ids []string) (map[string]string, error)
	// Wells lists a plate's wells by row, column.
	Wells(ctx context.Context, plateID string) ([]WellRow, error)
	// PlateCurves lists a plate's curves by key.
	PlateCurves(ctx context.Context, plateID string) ([]PlateCurve, error)
	Layout(ctx context.Context, id string) (*Layout, error)
	// Layouts lists every layout by ID, without its wells.
	Layouts(ctx context.Context) ([]Layout, error)
	// SetPlateProgress records a running job's progress (outside any
	// transaction: it is advisory).
	SetPlateProgress(ctx context.Context, plateID, status string, done, total int) error
	// PlateQCSeries returns one QC metric over an assay's assessed plates,
	// oldest experiment first.
	PlateQCSeries(ctx context.Context, assayID, metric string, from, to time.Time) ([]QCPoint, error)
	// PlateList lists plates newest experiment first, one page.
	PlateList(ctx context.Context, f PlateFilter) (plates []Plate, next string, err error)
	// DriftPlates returns an assay's assessed plates with every figure
	// assay drift charts, oldest experiment first.
	DriftPlates(ctx context.Context, assayID string, from, to time.Time) ([]DriftPlate, error)
	// AssayDriftCharts returns an assay's stored drift charts by metric.
	AssayDriftCharts(ctx context.Context, assayID string) ([]DriftChart, error)
	// DriftCharts returns every stored drift chart with its latest
	// recorded violation.
	DriftCharts(ctx context.Context) ([]DriftChart, error)
	// DriftViolations returns the recorded violations of an assay's
	// metric, oldest experiment first.
	DriftViolations(ctx context.Context, assayID, metric string) ([]DriftViolation, error)
}

// Tokens reads API tokens.
type Tokens interface {
	// TokenByHash returns the unrevoked token with that hash.
	TokenByHash(ctx context.Context, hash string) (*Token, error)
	// Tokens lists every token, revoked ones too, by name; Hash is empty.
	Tokens(ctx context.Context) ([]Token, error)
}

// AuditLog reads the audit log.
type AuditLog interface {
	// Audit returns the newest entries first, at most limit.
	Audit(ctx context.Context, limit int) ([]AuditEntry, error)
}

// Idempotency reads stored responses of keyed requests.
type Idempotency interface {
	Idempotent(ctx context.Context, actor, key string) (*Idempotent, error)
}

// Jobs runs the job queue.
type Jobs interface {
	// Job returns a queued job's state.
	Job(ctx context.Context, id int64) (*Job, error)
	// StartWorkers starts workers goroutines that take plate jobs and run
	// work, until StopWorkers: StartHandlers with only Plate.
	StartWorkers(ctx context.Context, work WorkFunc, workers int) error
	// StartHandlers starts workers goroutines that take the jobs of every
	// kind with a handler, until StopWorkers or Close. Jobs run with a
	// context of their own: cancelling ctx does not stop them.
	StartHandlers(ctx context.Context, h Handlers, workers int) error
	// StopWorkers stops taking jobs and lets running ones finish until ctx
	// is done (the grace period); then it cancels them, so that River
	// hands them back to be retried, and returns an error saying so.
	StopWorkers(ctx context.Context) error
	// JobCounts counts waiting and running jobs by kind, for the
	// queue-depth metrics (sluice_jobs_queued, sluice_jobs_running).
	JobCounts(ctx context.Context) ([]JobCount, error)
	// DiscardedWaiting lists discarded jobs whose plate or analysis still
	// waits on them (the worker died during the last attempt), for the
	// sweep that marks them failed.
	DiscardedWaiting(ctx context.Context, limit int) ([]Discarded, error)
}

// Health tells whether the store answers, for probes and metrics.
type Health interface {
	Ping(ctx context.Context) error
	Stats() PoolStats
	// Engine names the engine: "postgres" or "sqlite".
	Engine() string
}

// Writer holds the writes allowed inside a transaction. Insert* calls
// fail with ErrExists, without aborting the write, when the key is taken;
// those marked "held back" fail with ErrExists and abort it.
type Writer interface {
	InsertAssay(ctx context.Context, a *Assay) error
	InsertCompound(ctx context.Context, c *Compound) error
	// InsertFitRun is held back: a fit's ID is new, so a taken one is a
	// failure.
	InsertFitRun(ctx context.Context, r *FitRun) error
	// InsertReview appends a review event to a curve.
	InsertReview(ctx context.Context, r *Review) error
	// InsertRefit stores a refit's curve result and what it left out.
	InsertRefit(ctx context.Context, r *CurveResult, f *Refit) error
	InsertMSRStudy(ctx context.Context, m *MSRStudy) error
	InsertToken(ctx context.Context, t *Token) error
	// UpsertToken inserts the token or, when one with that name exists,
	// replaces its hash and scope (for the admin token seeded at start);
	// ErrExists, changing nothing, when that token is revoked: revoked
	// stays revoked.
	UpsertToken(ctx context.Context, t *Token) error
	// RevokeToken revokes the unrevoked token whose name or ID is
	// nameOrID, as of at; ErrNotFound when there is none.
	RevokeToken(ctx context.Context, nameOrID string, at time.Time) error
	// InsertSession opens a dashboard session; TouchSession records its
	// latest use; DeleteSession ends it (no error when there is none);
	// DeleteSessionsBefore ends every session past its absolute end (now)
	// or idle since idleSince, and returns how many.
	InsertSession(ctx context.Context, s *Session) error
	TouchSession(ctx context.Context, hash string, at time.Time) error
	DeleteSession(ctx context.Context, hash string) error
	DeleteSessionsBefore(ctx context.Context, idleSince, now time.Time) (int64, error)
	// InsertAudit is held back.
	InsertAudit(ctx context.Context, e *AuditEntry) error
	// InsertIdempotent is held back: a taken key (a concurrent request
	// under it committed first) fails the write with ErrExists.
	InsertIdempotent(ctx context.Context, r *Idempotent) error
	// ExpireIdempotent deletes at most limit idempotency records stored
	// before a time, oldest first, and says how many.
	ExpireIdempotent(ctx context.Context, before time.Time, limit int) (int64, error)

	InsertLayout(ctx context.Context, l *Layout) error
	// InsertPlate stores a plate and its wells.
	InsertPlate(ctx context.Context, p *Plate, wells []WellRow) error
	// EnqueuePlateFit queues the plate's fit job in this transaction, so
	// that a stored plate always has its job, and returns the job's ID
	// (store it as the plate's JobID); o.Timeout bounds each attempt, and
	// o.Small puts it in the small-job lane (QueueSmall).
	EnqueuePlateFit(ctx context.Context, plateID string, o JobOpts) (int64, error)
	// EnqueueAnalysis queues a single analysis (e.g. "fit", "potential")
	// of the record id, stored in this transaction, for a worker's
	// Handlers.Analysis; it returns the job's ID. o.Timeout bounds each
	// attempt.
	EnqueueAnalysis(ctx context.Context, analysis, id string, o JobOpts) (int64, error)
	// InsertAnalysis stores a single analysis to queue (with the job
	// EnqueueAnalysis returned), status queued.
	InsertAnalysis(ctx context.Context, a *Analysis) error
	// FinishAnalysis records how a queued analysis finished; ErrNotFound
	// when there is no queued analysis with that ID (finished already).
	FinishAnalysis(ctx context.Context, id string, r *AnalysisResult) error
	// FinishPlate stores a plate's curves (keeping any stored by an
	// earlier attempt) and its final status, QC and error.
	FinishPlate(ctx context.Context, plateID, status string, qc []byte, curves []PlateCurve, errText string) error
	// SetPlateQC stores a plate's QC figures as columns.
	SetPlateQC(ctx context.Context, plateID string, qc *PlateQC) error
	InsertSchildRun(ctx context.Context, r *SchildRun) error
	// UpsertDriftChart stores a drift chart's baseline, status and state.
	UpsertDriftChart(ctx context.Context, c *DriftChart) error
	// UpsertDriftCharts is UpsertDriftChart for several charts at once.
	UpsertDriftCharts(ctx context.Context, cs []*DriftChart) error
	// InsertDriftViolation records a rule violation once: ErrExists when
	// that plate's rule on that chart is recorded already.
	InsertDriftViolation(ctx context.Context, v *DriftViolation) error
	// TakeStalePotency takes up to limit compounds whose summaries in an
	// assay a write has made out of date off the list and returns them.
	TakeStalePotency(ctx context.Context, assayID string, limit int) ([]string, error)
	// AssayPotency and Reviews read as the Store's do, in the write's
	// transaction (after TakeStalePotency).
	AssayPotency(ctx context.Context, assayID string, compoundIDs []string) ([]PotencyRow, error)
	Reviews(ctx context.Context, curveIDs []string) ([]Review, error)
	// PutPotencySummaries stores compound summaries, replacing older ones.
	PutPotencySummaries(ctx context.Context, rs []PotencySummary) error
}
