package db

// Job statuses as clients see them.
const (
	JobQueued  = "queued"
	JobRunning = "running"
	JobDone    = "done"
	JobFailed  = "failed"
)

// JobStatus maps a job's River state and, for a plate job, its plate's
// status to what clients see: queued, running, done or failed, with the
// error to show (the plate's own error first, else the job's last one)
// when it failed or waits for a retry. p is nil for a job without a plate.
//
// The plate's status wins where River lags: FinishPlate stores done or
// failed in the job's last transaction, before River marks the job
// complete; and a plate marks itself running while River may still call
// the job available (between a retry's fetch and its first progress).
func JobStatus(j *Job, p *Plate) (status, errText string) {
	switch j.State {
	case "completed":
		status = JobDone
	case "running":
		status = JobRunning
	case "discarded", "cancelled":
		status = JobFailed
	default: // available, scheduled, retryable, pending
		status = JobQueued
		if p != nil && p.Status == PlateRunning {
			status = JobRunning
		}
	}
	if p != nil {
		switch p.Status {
		case PlateFailed:
			status = JobFailed
		case PlateDone:
			status = JobDone
		}
	}
	if status == JobFailed || j.State == "retryable" {
		if len(j.Errors) > 0 {
			errText = j.Errors[len(j.Errors)-1]
		}
		if p != nil && p.Error != "" {
			errText = p.Error
		}
	}
	return status, errText
}
