package db

import (
	"context"
	"time"
)

// Statuses of a queued analysis.
const (
	AnalysisQueued = "queued"
	AnalysisDone   = "done"
	AnalysisFailed = "failed"
)

// Analysis is a single analysis (a fit, a Schild analysis, a potential
// prediction) queued because it was over the synchronous work budget: the
// request until its job runs it, then the reply the job produced. It is
// finished once.
type Analysis struct {
	ID          string
	Kind        string // what to run: "fit", "schild", "potential"
	CreatedAt   time.Time
	SubmittedBy string
	JobID       int64
	Request     []byte // JSON: what the job needs to run it
	Status      string // AnalysisQueued, AnalysisDone or AnalysisFailed
	// The reply, once done: its status code, content type and body, and
	// the stored record it made ("" for none). Error says why it failed.
	ReplyStatus int
	ReplyType   string
	Reply       []byte
	Location    string
	Error       string
	FinishedAt  *time.Time
}

// AnalysisResult is how an analysis finished.
type AnalysisResult struct {
	Status      string // AnalysisDone or AnalysisFailed
	ReplyStatus int
	ReplyType   string
	Reply       []byte
	Location    string
	Error       string
	At          time.Time
}

const analysisCols = "id, kind, created_at, submitted_by, job_id, request, status, reply_status, reply_type, reply, location, error, finished_at"

func (w *sqlWriter) InsertAnalysis(ctx context.Context, a *Analysis) error {
	const op = "InsertAnalysis"
	req, ok := jsonDoc(a.Request, "")
	if !ok || req == nil {
		return w.invalid(op, a.ID, "request")
	}
	if a.Kind == "" {
		return w.invalid(op, a.ID, "kind")
	}
	return w.insert(ctx, op, a.ID, "INSERT INTO analyses (id, kind, created_at, submitted_by, job_id, request, status) VALUES ($1, $2, $3, $4, $5, $6, $7)",
		a.ID, a.Kind, w.e.timeArg(a.CreatedAt), a.SubmittedBy, a.JobID, req, AnalysisQueued)
}

func (w *sqlWriter) FinishAnalysis(ctx context.Context, id string, r *AnalysisResult) error {
	const op = "FinishAnalysis"
	if r.Status != AnalysisDone && r.Status != AnalysisFailed {
		return w.invalid(op, id, "status")
	}
	n, err := w.exec(ctx, op, id, "UPDATE analyses SET status = $2, reply_status = $3, reply_type = $4, reply = $5, location = $6, "+
		"error = $7, finished_at = $8 WHERE id = $1 AND status = 'queued'",
		id, r.Status, r.ReplyStatus, r.ReplyType, r.Reply, r.Location, r.Error, w.e.timeArg(r.At))
	if err != nil {
		return err
	}
	if n == 0 {
		// No such analysis, or one finished already: keep the first.
		return &Error{Op: op, Key: id, Err: ErrNotFound}
	}
	return nil
}

func (s *sqlStore) Analysis(ctx context.Context, id string) (*Analysis, error) {
	var a Analysis
	var created dbTime
	var finished *dbTime
	err := s.e.queryRow(ctx, "SELECT "+analysisCols+" FROM analyses WHERE id = $1", id).Scan(&a.ID, &a.Kind, &created, &a.SubmittedBy,
		&a.JobID, &a.Request, &a.Status, &a.ReplyStatus, &a.ReplyType, &a.Reply, &a.Location, &a.Error, &finished)
	if err != nil {
		return nil, s.read("Analysis", id, err)
	}
	a.CreatedAt = created.t
	if finished != nil {
		t := finished.t
		a.FinishedAt = &t
	}
	return &a, nil
}
