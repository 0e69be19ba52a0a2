package db

import (
	"context"
	"fmt"
	"time"
)

// JobCount is how many jobs of one kind wait for a worker and how many run,
// for the queue-depth metrics an autoscaler follows.
type JobCount struct {
	Kind string // JobPlateFit or JobAnalysis
	// Queued counts jobs a worker will take: River's states available
	// (now), scheduled and retryable (after a delay or a backoff).
	Queued int64
	// Running counts jobs a worker has taken and not finished.
	Running int64
	// Retryable counts the queued jobs that failed an attempt and wait
	// for their next one (part of Queued).
	Retryable int64
	// Discarded counts jobs whose last attempt failed and that River keeps
	// (it prunes them after a retention: 7 days by default); a rise means
	// plates or analyses marked failed.
	Discarded int64
	// OldestRunning is when the longest-running job's attempt began (zero
	// when none runs): a job running far past its own timeout means a
	// stuck worker or a rescuer that does not run.
	OldestRunning time.Time
}

// jobKinds are the kinds JobCounts always reports, in this order.
var jobKinds = [...]string{JobPlateFit, JobAnalysis}

// JobCounts counts the queue's waiting and running jobs of each of
// Sluice's kinds (zero when there are none), in one query of River's job
// table, the same SQL on both engines.
func (s *sqlStore) JobCounts(ctx context.Context) ([]JobCount, error) {
	rows, err := s.e.query(ctx, "SELECT kind, state, count(*), min(attempted_at) FROM river_job "+
		"WHERE state IN ('available', 'scheduled', 'retryable', 'running', 'discarded') GROUP BY kind, state")
	if err != nil {
		return nil, s.read("JobCounts", "", err)
	}
	defer rows.Close()
	out := make([]JobCount, len(jobKinds))
	for i, k := range jobKinds {
		out[i].Kind = k
	}
	for rows.Next() {
		var kind, state string
		var n int64
		var oldest riverTime
		if err := rows.Scan(&kind, &state, &n, &oldest); err != nil {
			return nil, s.read("JobCounts", "", err)
		}
		for i := range out {
			if out[i].Kind != kind {
				continue
			}
			switch state {
			case "running":
				out[i].Running += n
				out[i].OldestRunning = oldest.t
			case "discarded":
				out[i].Discarded += n
			case "retryable":
				out[i].Retryable += n
				out[i].Queued += n
			default:
				out[i].Queued += n
			}
		}
	}
	return out, s.read("JobCounts", "", rows.Err())
}

// riverTime scans a timestamp of River's table: a time.Time on
// PostgreSQL; on SQLite the text of datetime('now', 'subsec') or of the
// time River's driver wrote, as SQLite's min() returns it.
type riverTime struct{ t time.Time }

// riverTimeLayouts are the texts River's SQLite driver stores times in.
var riverTimeLayouts = []string{"2006-01-02 15:04:05.999999999", time.RFC3339Nano, "2006-01-02T15:04:05.999999999", sqliteTime}

func (r *riverTime) Scan(src any) error {
	switch v := src.(type) {
	case nil:
		r.t = time.Time{}
		return nil
	case time.Time:
		r.t = v.UTC()
		return nil
	case []byte:
		return r.Scan(string(v))
	case string:
		for _, l := range riverTimeLayouts {
			if t, err := time.Parse(l, v); err == nil {
				r.t = t.UTC()
				return nil
			}
		}
		return fmt.Errorf("job time %q: not a time River writes", v)
	}
	return fmt.Errorf("job time: unexpected %T", src)
}
