package service

import (
	"context"
	"errors"
	"fmt"
	"time"

	"sluice/db"
)

// Settings of the periodic sweep (Service.Sweep, run by every worker).
const (
	// DefaultIdempotencyRetention is how long an idempotency record is
	// kept when Deps.IdempotencyRetention is zero: a day, the usual
	// window in which a client retries a request (common practice for
	// idempotency keys, e.g. the IETF httpapi Idempotency-Key draft's
	// examples; not a standard value).
	DefaultIdempotencyRetention = 24 * time.Hour
	// expireBatch is how many records one transaction deletes, and
	// expireBatches how many batches one sweep deletes at most (so that
	// one sweep ends; the next goes on).
	expireBatch   = 1000
	expireBatches = 100
	// discardedBatch bounds the discarded jobs one sweep handles.
	discardedBatch = 100
	// DefaultSweepInterval is how often a worker sweeps.
	DefaultSweepInterval = time.Minute
)

// SweepResult says what one sweep did.
type SweepResult struct {
	// Failed counts the plates and analyses marked failed because the
	// queue discarded their job without telling the worker's Failed hook.
	Failed int
	// Expired counts the idempotency records deleted.
	Expired int64
}

// Sweep does the service's periodic upkeep, safe to run on every worker
// at once (each step is idempotent):
//
//   - a plate or queued analysis whose job the queue discarded without
//     JobFailed being told (River's rescuer discards the job of a worker
//     that died or hung during its last attempt; or JobFailed could not
//     write) is marked failed with the reason, so that it does not wait
//     for ever;
//   - idempotency records older than the retention are deleted, oldest
//     first, expireBatch at a time, at most expireBatches per sweep.
//
// A record is thus kept at least the retention, and deleted within about
// one sweep interval after it.
func (s *Service) Sweep(ctx context.Context) (SweepResult, error) {
	var res SweepResult
	var errs []error
	jobs, err := s.store.DiscardedWaiting(ctx, discardedBatch)
	if err != nil {
		errs = append(errs, fmt.Errorf("find discarded jobs: %w", err))
	}
	for _, d := range jobs {
		reason := fmt.Sprintf("the queue gave up on job %d after %d attempts", d.JobID, d.Attempt)
		if j, err := s.store.Job(ctx, d.JobID); err == nil && len(j.Errors) > 0 {
			reason += "; the last: " + j.Errors[len(j.Errors)-1]
		}
		if err := s.JobFailed(ctx, d.Kind, d.Target, errors.New(reason)); err != nil {
			errs = append(errs, fmt.Errorf("mark %s failed: %w", d.Target, err))
			continue
		}
		s.log.Warn("sweep: marked failed, its job discarded", "kind", d.Kind, "target", d.Target, "job", d.JobID, "reason", reason)
		res.Failed++
	}
	before := s.now().Add(-s.idemRetention)
	for range expireBatches {
		var n int64
		err := s.store.Write(ctx, func(w db.Writer) error {
			var err error
			n, err = w.ExpireIdempotent(ctx, before, expireBatch)
			return err
		})
		if err != nil {
			errs = append(errs, fmt.Errorf("expire idempotency records: %w", err))
			break
		}
		res.Expired += n
		if n < expireBatch {
			break
		}
	}
	return res, errors.Join(errs...)
}

// RunSweeps sweeps every interval (zero: DefaultSweepInterval) until ctx
// is done, logging what each sweep did and its errors; a failed sweep is
// tried again at the next tick.
func (s *Service) RunSweeps(ctx context.Context, interval time.Duration) {
	if interval <= 0 {
		interval = DefaultSweepInterval
	}
	t := time.NewTicker(interval)
	defer t.Stop()
	for {
		res, err := s.Sweep(ctx)
		if err != nil && ctx.Err() == nil {
			s.log.Error("sweep", "err", err)
		}
		if res.Expired > 0 {
			s.log.Info("sweep: idempotency records expired", "deleted", res.Expired)
		}
		select {
		case <-ctx.Done():
			return
		case <-t.C:
		}
	}
}
