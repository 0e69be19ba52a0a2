package db

import (
	"context"
	"time"
)

// MaxExpireBatch bounds the rows one ExpireIdempotent call deletes, so
// that one transaction stays short and holds few locks.
const MaxExpireBatch = 10000

// ExpireIdempotent deletes at most limit idempotency records stored
// before the given time, oldest first, and returns how many it deleted
// (fewer than limit: none older are left). The same SQL on both engines;
// the index on created_at (migration 00015) finds them. limit is clamped
// to [1, MaxExpireBatch].
func (w *sqlWriter) ExpireIdempotent(ctx context.Context, before time.Time, limit int) (int64, error) {
	limit = min(max(limit, 1), MaxExpireBatch)
	return w.exec(ctx, "ExpireIdempotent", "", "DELETE FROM idempotency_keys WHERE (actor, key) IN "+
		"(SELECT actor, key FROM idempotency_keys WHERE created_at < $1 ORDER BY created_at LIMIT $2)",
		w.e.timeArg(before), limit)
}

// Discarded is a job the queue has given up on (River's state discarded)
// while what waits on it is still queued or running: a plate, or a queued
// analysis.
type Discarded struct {
	Kind   string // JobPlateFit or JobAnalysis
	Target string // the plate's or the analysis' ID
	JobID  int64
	// Attempt is how many attempts the job had.
	Attempt int
}

// DiscardedWaiting lists at most limit discarded jobs whose plate or
// analysis still waits: River's rescuer discards the job of a worker that
// died during its last attempt without running it, so Handlers.Failed is
// never told, and the job's plate would stay running for ever. The same
// SQL on both engines; plates_job and analyses_job find the targets.
func (s *sqlStore) DiscardedWaiting(ctx context.Context, limit int) ([]Discarded, error) {
	rows, err := s.e.query(ctx, "SELECT j.kind, p.id, j.id, j.attempt FROM river_job j JOIN plates p ON p.job_id = j.id "+
		"WHERE j.state = 'discarded' AND j.kind = $1 AND p.status IN ('queued', 'running') "+
		"UNION ALL SELECT j.kind, a.id, j.id, j.attempt FROM river_job j JOIN analyses a ON a.job_id = j.id "+
		"WHERE j.state = 'discarded' AND j.kind = $2 AND a.status = 'queued' LIMIT $3", JobPlateFit, JobAnalysis, limit)
	if err != nil {
		return nil, s.read("DiscardedWaiting", "", err)
	}
	defer rows.Close()
	var out []Discarded
	for rows.Next() {
		var d Discarded
		if err := rows.Scan(&d.Kind, &d.Target, &d.JobID, &d.Attempt); err != nil {
			return nil, s.read("DiscardedWaiting", "", err)
		}
		out = append(out, d)
	}
	return out, s.read("DiscardedWaiting", "", rows.Err())
}
