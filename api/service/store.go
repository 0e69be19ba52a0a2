package service

import (
	"context"
	"time"

	"sluice/db"
)

// The store as the use cases see it: small interfaces over db.Store's
// methods, declared here by their consumer. A db.Store satisfies Store.

// Writes runs a transaction: all of fn's writes or none.
type Writes interface {
	Write(ctx context.Context, fn func(db.Writer) error) error
}

// Replies finds the stored reply to an idempotent request.
type Replies interface {
	Idempotent(ctx context.Context, actor, key string) (*db.Idempotent, error)
}

// Catalogue reads assays and compounds.
type Catalogue interface {
	Assay(ctx context.Context, id string) (*db.Assay, error)
	Assays(ctx context.Context) ([]db.Assay, error)
	Compound(ctx context.Context, id string) (*db.Compound, error)
	Compounds(ctx context.Context) ([]db.Compound, error)
}

// FitRuns reads stored fits.
type FitRuns interface {
	FitRun(ctx context.Context, id string) (*db.FitRun, error)
	FitRuns(ctx context.Context, f db.FitFilter) (runs []db.FitRun, next string, err error)
}

// SchildRuns reads stored Schild analyses.
type SchildRuns interface {
	SchildRun(ctx context.Context, id string) (*db.SchildRun, error)
}

// Analyses reads queued single analyses.
type Analyses interface {
	Analysis(ctx context.Context, id string) (*db.Analysis, error)
}

// Plates reads plates, their wells, curves, Schild runs, layouts and jobs,
// and records a running job's progress.
type Plates interface {
	Plate(ctx context.Context, id string) (*db.Plate, error)
	PlateByJob(ctx context.Context, jobID int64) (*db.Plate, error)
	PlateStatuses(ctx context.Context, ids []string) (map[string]string, error)
	Wells(ctx context.Context, plateID string) ([]db.WellRow, error)
	PlateCurves(ctx context.Context, plateID string) ([]db.PlateCurve, error)
	PlateSchildRuns(ctx context.Context, plateID string) ([]db.SchildRun, error)
	Layout(ctx context.Context, id string) (*db.Layout, error)
	Layouts(ctx context.Context) ([]db.Layout, error)
	SetPlateProgress(ctx context.Context, plateID, status string, done, total int) error
	Job(ctx context.Context, id int64) (*db.Job, error)
}

// Potency reads potency histories, review events, refits and MSR
// studies, and finds plates.
type Potency interface {
	CompoundPotency(ctx context.Context, f db.PotencyFilter) ([]db.PotencyRow, error)
	AssayCompounds(ctx context.Context, assayID, after string, limit int, desc bool) ([]string, error)
	AssayPotency(ctx context.Context, assayID string, compoundIDs []string) ([]db.PotencyRow, error)
	CurvePotency(ctx context.Context, id string) (*db.PotencyRow, error)
	PotencySummaries(ctx context.Context, p db.PotencyPage) ([]db.PotencySummary, error)
	PotencyStale(ctx context.Context, assayID string) (bool, error)
	UnreviewedCurves(ctx context.Context, limit int) ([]db.PotencyRow, error)
	CurveResult(ctx context.Context, id string) (*db.CurveResult, error)
	Reviews(ctx context.Context, curveIDs []string) ([]db.Review, error)
	CurveRefit(ctx context.Context, id string) (*db.Refit, error)
	MSRStudy(ctx context.Context, id string) (*db.MSRStudy, error)
	PlateList(ctx context.Context, f db.PlateFilter) ([]db.Plate, string, error)
}

// Drift reads assays' drift series and charts.
type Drift interface {
	DriftPlates(ctx context.Context, assayID string, from, to time.Time) ([]db.DriftPlate, error)
	AssayDriftCharts(ctx context.Context, assayID string) ([]db.DriftChart, error)
	DriftCharts(ctx context.Context) ([]db.DriftChart, error)
}

// Sweeps finds the jobs the queue gave up on while their plate or
// analysis waits (Service.Sweep).
type Sweeps interface {
	DiscardedWaiting(ctx context.Context, limit int) ([]db.Discarded, error)
}

// Store is everything the service reads and writes.
type Store interface {
	Sweeps
	Writes
	Replies
	Catalogue
	FitRuns
	SchildRuns
	Analyses
	Plates
	Potency
	Drift
}

var _ Store = db.Store(nil)
