package db

import "context"

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
}

// jobKinds are the kinds JobCounts always reports, in this order.
var jobKinds = [...]string{JobPlateFit, JobAnalysis}

// JobCounts counts the queue's waiting and running jobs of each of
// Sluice's kinds (zero when there are none), in one query of River's job
// table, the same SQL on both engines.
func (s *sqlStore) JobCounts(ctx context.Context) ([]JobCount, error) {
	rows, err := s.e.query(ctx, "SELECT kind, state, count(*) FROM river_job "+
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
		if err := rows.Scan(&kind, &state, &n); err != nil {
			return nil, s.read("JobCounts", "", err)
		}
		for i := range out {
			if out[i].Kind != kind {
				continue
			}
			switch state {
			case "running":
				out[i].Running += n
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
