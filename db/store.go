package db

import "context"

// Store is the persistence the service needs. Reads run outside
// transactions; every write runs inside Write, all or nothing.
type Store interface {
	// Write runs fn in one transaction, committed when fn returns nil.
	Write(ctx context.Context, fn func(Writer) error) error

	Assay(ctx context.Context, id string) (*Assay, error)
	Assays(ctx context.Context) ([]Assay, error)
	Compound(ctx context.Context, id string) (*Compound, error)
	Compounds(ctx context.Context) ([]Compound, error)
	FitRun(ctx context.Context, id string) (*FitRun, error)
	// FitRuns lists runs newest first and returns the cursor of the next
	// page ("" on the last).
	FitRuns(ctx context.Context, f FitFilter) (runs []FitRun, next string, err error)
	// TokenByHash returns the unrevoked token with that hash.
	TokenByHash(ctx context.Context, hash string) (*Token, error)
	Idempotent(ctx context.Context, actor, key string) (*Idempotent, error)
	// Audit returns the newest entries first, at most limit.
	Audit(ctx context.Context, limit int) ([]AuditEntry, error)

	Plate(ctx context.Context, id string) (*Plate, error)
	PlateByJob(ctx context.Context, jobID int64) (*Plate, error)
	Wells(ctx context.Context, plateID string) ([]WellRow, error)
	PlateCurves(ctx context.Context, plateID string) ([]PlateCurve, error)
	Layout(ctx context.Context, id string) (*Layout, error)
	// SetPlateProgress records a running job's progress (outside any
	// transaction: it is advisory).
	SetPlateProgress(ctx context.Context, plateID, status string, done, total int) error
	SchildRun(ctx context.Context, id string) (*SchildRun, error)
	PlateSchildRuns(ctx context.Context, plateID string) ([]SchildRun, error)
	// Job returns a queued job's state.
	Job(ctx context.Context, id int64) (*Job, error)
	// StartWorkers starts workers goroutines that take plate jobs and run
	// work, until StopWorkers.
	StartWorkers(ctx context.Context, work WorkFunc, workers int) error
	StopWorkers(ctx context.Context) error

	Ping(ctx context.Context) error
	Stats() PoolStats
	// Engine names the engine: "postgres" or "sqlite".
	Engine() string
	Close()
}

// Writer holds the writes allowed inside a transaction.
type Writer interface {
	InsertAssay(ctx context.Context, a *Assay) error
	InsertCompound(ctx context.Context, c *Compound) error
	InsertFitRun(ctx context.Context, r *FitRun) error
	InsertToken(ctx context.Context, t *Token) error
	// UpsertToken inserts the token or, when one with that name exists,
	// replaces its hash and scope (for the admin token seeded at start).
	UpsertToken(ctx context.Context, t *Token) error
	InsertAudit(ctx context.Context, e *AuditEntry) error
	// InsertIdempotent fails with ErrExists when the key is taken.
	InsertIdempotent(ctx context.Context, r *Idempotent) error

	InsertLayout(ctx context.Context, l *Layout) error
	// InsertPlate stores a plate and its wells.
	InsertPlate(ctx context.Context, p *Plate, wells []WellRow) error
	// EnqueuePlateFit queues the plate's fit job in this transaction, so
	// that a stored plate always has its job, and returns the job's ID
	// (store it as the plate's JobID).
	EnqueuePlateFit(ctx context.Context, plateID string) (int64, error)
	// FinishPlate stores a plate's curves (keeping any stored by an
	// earlier attempt) and its final status, QC and error.
	FinishPlate(ctx context.Context, plateID, status string, qc []byte, curves []PlateCurve, errText string) error
	InsertSchildRun(ctx context.Context, r *SchildRun) error
}
