package service

import (
	"cmp"
	"crypto/rand"
	"encoding/binary"
	"errors"
	"log/slog"
	"time"

	"github.com/google/uuid"
)

// Deps are the service's collaborators and settings.
type Deps struct {
	// Store is required.
	Store Store
	// Now is the clock; nil means time.Now in UTC, truncated to the
	// microsecond (what both engines store).
	Now func() time.Time
	// NewID returns a new record ID; nil means a UUIDv7.
	NewID func() string
	// NewSeed draws a bootstrap seed for a request that gives none; nil
	// means 53 bits from crypto/rand (exact in a JSON number).
	NewSeed func() uint64
	// Log receives what the use cases log; nil discards.
	Log *slog.Logger
	// FitWorkers is the goroutines one fit's bootstrap may use; zero means
	// GOMAXPROCS, negative is refused.
	FitWorkers int
	// Budget bounds synchronous work; the zero value means DefaultBudget.
	Budget Budget
	// Observer is told about fits for metrics; nil observes nothing.
	Observer Observer
	// IdempotencyRetention is how long an idempotency record is kept
	// before Sweep deletes it; zero means DefaultIdempotencyRetention
	// (24 h), negative is refused.
	IdempotencyRetention time.Duration
	// MaxStoredReply bounds the body of a reply stored with its
	// Idempotency-Key, in bytes: a larger one keeps its key, status and
	// Location but not its body, and a replay is answered 409 saying so
	// (idem.go). Zero means DefaultMaxStoredReply (256 KiB), negative is
	// refused.
	MaxStoredReply int
}

// Service runs the use cases. It is safe for concurrent use.
type Service struct {
	store      Store
	now        func() time.Time
	newID      func() string
	newSeed    func() uint64
	log        *slog.Logger
	fitWorkers int
	budget     Budget
	obs        Observer
	watch      *plateWatch // WaitPlate's shared poll
	known      knownRefs   // assays and compounds seen in the store
	// idemRetention and maxStoredReply are Deps'.
	idemRetention  time.Duration
	maxStoredReply int
}

// New builds the service, filling documented defaults.
func New(d Deps) (*Service, error) {
	if d.Store == nil {
		return nil, errors.New("service: Deps.Store is required")
	}
	if d.IdempotencyRetention < 0 || d.MaxStoredReply < 0 {
		return nil, errors.New("service: Deps.IdempotencyRetention and MaxStoredReply must be ≥ 0")
	}
	if d.FitWorkers < 0 {
		return nil, errors.New("service: Deps.FitWorkers must be ≥ 0")
	}
	budget, err := d.Budget.resolve()
	if err != nil {
		return nil, err
	}
	s := &Service{store: d.Store, now: d.Now, newID: d.NewID, newSeed: d.NewSeed, log: d.Log, fitWorkers: d.FitWorkers, budget: budget, obs: d.Observer,
		idemRetention: cmp.Or(d.IdempotencyRetention, DefaultIdempotencyRetention), maxStoredReply: cmp.Or(d.MaxStoredReply, DefaultMaxStoredReply)}
	if s.now == nil {
		s.now = func() time.Time { return time.Now().UTC().Truncate(time.Microsecond) }
	}
	if s.newID == nil {
		s.newID = func() string { return uuid.Must(uuid.NewV7()).String() }
	}
	if s.newSeed == nil {
		s.newSeed = randomSeed
	}
	if s.log == nil {
		s.log = slog.New(slog.DiscardHandler)
	}
	if s.obs == nil {
		s.obs = noObserver{}
	}
	s.watch = newPlateWatch(s.store, s.log, waitTick)
	return s, nil
}

// randomSeed draws 53 bits from the system's secure source: exact in a
// JSON number.
func randomSeed() uint64 {
	var b [8]byte
	rand.Read(b[:])
	return binary.LittleEndian.Uint64(b[:]) >> 11
}
