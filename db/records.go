package db

import "time"

// Assay is an assay: what is measured on which target.
type Assay struct {
	ID        string
	Name      string
	Target    string // e.g. the receptor and subunits
	Readout   string // e.g. "membrane potential dye", "whole-cell current"
	Units     string // response units, e.g. "% of max", "pA"
	CreatedAt time.Time
	CreatedBy string
	// ReferenceCompoundID names the assay's reference compound, charted
	// as reference_pec50; "" for none (then a plate's reference wells
	// name it).
	ReferenceCompoundID string
}

// Compound is a compound tested in assays.
type Compound struct {
	ID        string
	Name      string
	Target    string // intended target, free text
	Readout   string
	Units     string
	CreatedAt time.Time
	CreatedBy string
}

// FitRun is one stored fit with its provenance. It is immutable once
// stored: a re-fit is a new run whose RefitOf names the old one.
type FitRun struct {
	ID            string
	CreatedAt     time.Time
	SubmittedBy   string
	AssayID       string // "" for none
	CompoundID    string // "" for none
	RefitOf       string // "" for none
	Model         string
	Status        string
	LogEC50       *float64 // nil when not estimated
	EngineVersion string
	InputSHA256   string
	// Settings, Input and Result are JSON documents: the fit settings as
	// requested (model, fixed, confidence, unit, bootstrap with its seed),
	// the points as submitted, and the result object as returned.
	Settings []byte
	Input    []byte
	Result   []byte
	Labels   []byte // a JSON object
	Params   []FitParam
	// MeasuredAt is the experiment's time; zero means CreatedAt (the
	// upload time, until the API accepts one).
	MeasuredAt time.Time
	// BootDraws are the bootstrap parameter vectors row by row, B ×
	// BootCols (the number of parameters); nil without a bootstrap.
	BootCols  int
	BootDraws []float64
}

// FitParam is one parameter of a stored run, for queries across runs.
type FitParam struct {
	Name     string   `json:"name"`
	Estimate *float64 `json:"estimate"`
	SE       *float64 `json:"se"`
	WaldLo   *float64 `json:"wald_lo"`
	WaldHi   *float64 `json:"wald_hi"`
	BootLo   *float64 `json:"boot_lo"`
	BootHi   *float64 `json:"boot_hi"`
	Fixed    bool     `json:"fixed"`
	AtBound  bool     `json:"at_bound"`
}

// FitFilter selects runs for FitRuns; zero fields do not filter.
type FitFilter struct {
	AssayID, CompoundID string
	From, To            time.Time // created_at in [From, To)
	// Limit is 1–1000; zero means 100.
	Limit int
	// Cursor continues a listing: the NextCursor of the previous page.
	Cursor string
}

// Token is an API token. Only the SHA-256 of the secret is stored.
type Token struct {
	ID        string
	Name      string
	Scope     string // read, submit or admin
	Hash      string // hex SHA-256 of the secret
	CreatedAt time.Time
	RevokedAt *time.Time
}

// AuditEntry records who did what.
type AuditEntry struct {
	At     time.Time
	Actor  string // the token's name
	Action string // e.g. "fit.create"
	Target string // e.g. the run's ID
	Detail []byte // a JSON object
}

// Idempotent is the stored response to a POST carrying an Idempotency-Key.
type Idempotent struct {
	Actor         string
	Key           string
	RequestSHA256 string // of the route, the parameters that change what is stored, and the body
	Status        int
	ContentType   string
	Body          []byte
	Location      string // the reply's Location header; "" for none
	// OmittedBytes is the size of a reply body over the service's
	// stored-reply cap, which is not kept (Body is empty); 0 when the body
	// is kept.
	OmittedBytes int64
	CreatedAt    time.Time
}

// PoolStats describe the store's connections, for metrics.
type PoolStats struct {
	Max, Open, InUse, Idle int
}
