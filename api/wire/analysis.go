package wire

import "encoding/json"

// AnalysisQueued is the 202 answer to a single analysis over the
// synchronous work budget: where to find it, and its job.
type AnalysisQueued struct {
	AnalysisID string `json:"analysis_id"`
	JobID      int64  `json:"job_id"`
	Status     string `json:"status"` // "queued"
}

// Analysis is GET /v1/analyses/{id}: a queued single analysis and, once
// done, its result (the reply the synchronous request would have had:
// Result holds it when it is JSON, and ResultURL gives it byte for byte).
type Analysis struct {
	ID          string          `json:"id"`
	Kind        string          `json:"kind"`   // "fit", "schild" or "potential"
	Status      string          `json:"status"` // queued, running, done or failed
	JobID       int64           `json:"job_id"`
	CreatedAt   string          `json:"created_at"`
	SubmittedBy string          `json:"submitted_by"`
	FinishedAt  string          `json:"finished_at,omitempty"`
	Location    string          `json:"location,omitempty"` // the stored record it made
	ResultType  string          `json:"result_type,omitempty"`
	ResultURL   string          `json:"result_url,omitempty"`
	Result      json.RawMessage `json:"result,omitempty"`
	Error       string          `json:"error,omitempty"`
}
