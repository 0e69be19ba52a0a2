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
}
