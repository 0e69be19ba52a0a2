package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"mime"
	"net/http"
	"strings"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/cost"
)

// Kinds of queued analysis (the job's analysis).
const (
	analysisFit         = "fit"
	analysisSchild      = "schild"
	analysisPotential   = "potential"
	analysisOperational = "operational"
	analysisRefit       = "refit"
)

// queuedRequest is what a queued analysis stores to run later: the
// request as validated (a bootstrap seed drawn for it included) and what
// the synchronous path took besides.
type queuedRequest struct {
	Fit         *wire.FitRequest         `json:"fit,omitempty"`
	Schild      *wire.SchildRequest      `json:"schild,omitempty"`
	Potential   *wire.PotentialRequest   `json:"potential,omitempty"`
	Operational *wire.OperationalRequest `json:"operational,omitempty"`
	Refit       *queuedRefit             `json:"refit,omitempty"`
	SVG         bool                     `json:"svg,omitempty"`
	InputSHA256 string                   `json:"input_sha256,omitempty"`
}

// queue plans a request over the synchronous budget: the analysis stored
// with its job in the write's transaction, answered 202 with where to
// find it. The job runs it through RunAnalysis, with a timeout scaled to
// work (JobTimeout).
func (s *Service) queue(who Caller, kind string, q *queuedRequest, work cost.Work) (plan, error) {
	doc, err := json.Marshal(q)
	if err != nil {
		return plan{}, fmt.Errorf("encode queued %s: %w", kind, err)
	}
	id, now := s.newID(), s.now()
	return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
		job, err := w.EnqueueAnalysis(ctx, kind, id, jobOpts(work))
		if err != nil {
			return nil, fmt.Errorf("queue %s %s: %w", kind, id, err)
		}
		if err := w.InsertAnalysis(ctx, &db.Analysis{ID: id, Kind: kind, CreatedAt: now, SubmittedBy: who.Name, JobID: job, Request: doc}); err != nil {
			return nil, fmt.Errorf("store queued %s %s: %w", kind, id, err)
		}
		if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: kind + ".queue", Target: id}); err != nil {
			return nil, fmt.Errorf("audit queued %s %s: %w", kind, id, err)
		}
		return jsonReply(http.StatusAccepted, wire.AnalysisQueued{AnalysisID: id, JobID: job, Status: db.AnalysisQueued}, "/v1/analyses/"+id)
	}}, nil
}

// RunAnalysis is the job of a queued analysis (db.Handlers.Analysis): it
// runs the request as the synchronous path would, and stores what that
// would have stored together with the reply, in one transaction. An
// analysis finished already (by an earlier attempt) is left as it is. A
// request the analysis refuses (bad input) finishes as failed; any other
// error is returned, for the queue to retry.
func (s *Service) RunAnalysis(ctx context.Context, kind, id string) error {
	a, err := s.store.Analysis(ctx, id)
	if err != nil {
		return fmt.Errorf("queued %s %s: %w", kind, id, err)
	}
	if a.Status != db.AnalysisQueued {
		return nil
	}
	var q queuedRequest
	if err := json.Unmarshal(a.Request, &q); err != nil {
		return s.finishAnalysis(ctx, id, nil, fmt.Errorf("stored request: %w", err))
	}
	p, err := s.runQueued(ctx, Caller{Name: a.SubmittedBy}, kind, &q)
	if err != nil {
		if ctx.Err() == nil && refused(err) {
			return s.finishAnalysis(ctx, id, nil, err)
		}
		return fmt.Errorf("queued %s %s: %w", kind, id, err)
	}
	return s.finishAnalysis(ctx, id, &p, nil)
}

// runQueued runs a queued request's use case, without the synchronous
// budget.
func (s *Service) runQueued(ctx context.Context, who Caller, kind string, q *queuedRequest) (plan, error) {
	switch {
	case kind == analysisFit && q.Fit != nil:
		in, err := s.prepareFit(ctx, q.Fit)
		if err != nil {
			return plan{}, err
		}
		return s.runFit(ctx, who, q.Fit, in, q.InputSHA256)
	case kind == analysisSchild && q.Schild != nil:
		curves, set, _, err := s.prepareSchild(q.Schild)
		if err != nil {
			return plan{}, err
		}
		return s.runSchild(ctx, who, q.Schild, curves, set, q.InputSHA256)
	case kind == analysisPotential && q.Potential != nil:
		m, lc, _, err := s.preparePotential(ctx, q.Potential, q.SVG)
		if err != nil {
			return plan{}, err
		}
		r, err := s.runPotential(ctx, q.Potential, m, lc, q.SVG)
		return plan{reply: r}, err
	case kind == analysisOperational && q.Operational != nil:
		ref, part, _, err := s.prepareOperational(q.Operational)
		if err != nil {
			return plan{}, err
		}
		r, err := operational(q.Operational, ref, part)
		return plan{reply: r}, err
	case kind == analysisRefit && q.Refit != nil && q.Refit.Request != nil:
		old, rp, _, err := s.prepareRefit(ctx, q.Refit.CurveID, q.Refit.Request)
		if err != nil {
			return plan{}, err
		}
		return s.runRefit(ctx, who, old, rp, q.Refit.Request.Reason)
	}
	return plan{}, &Error{Kind: ErrInvalid, Detail: fmt.Sprintf("no %s request in the queued analysis", kind)}
}

// finishAnalysis stores how an analysis finished: p's records with its
// reply, or the error that refused it.
func (s *Service) finishAnalysis(ctx context.Context, id string, p *plan, failure error) error {
	err := s.store.Write(ctx, func(w db.Writer) error {
		res := &db.AnalysisResult{Status: db.AnalysisFailed, At: s.now()}
		if failure != nil {
			res.Error = failure.Error()
		} else {
			reply := p.reply
			if p.commit != nil {
				r, err := p.commit(ctx, w)
				if err != nil {
					return err
				}
				reply = r
			}
			res.Status, res.ReplyStatus, res.ReplyType, res.Reply, res.Location = db.AnalysisDone, reply.Status, reply.ContentType, reply.Body, reply.Location
		}
		return w.FinishAnalysis(ctx, id, res)
	})
	if errors.Is(err, db.ErrNotFound) {
		return nil // finished by another attempt; nothing of this one is kept
	}
	if err != nil {
		return fmt.Errorf("finish analysis %s: %w", id, err)
	}
	return nil
}

// refused reports whether err is the request's fault (a 4xx had it run
// synchronously), so that retrying cannot help.
func refused(err error) bool {
	for _, kind := range []error{ErrInvalid, ErrBadRequest, ErrTooMuchWork, fit.ErrInvalidInput, db.ErrReference, db.ErrInvalid} {
		if errors.Is(err, kind) {
			return true
		}
	}
	return false
}

// Analysis is GET /v1/analyses/{id}: a queued analysis, with its result
// once done.
func (s *Service) Analysis(ctx context.Context, id string) (*wire.Analysis, error) {
	a, err := s.store.Analysis(ctx, id)
	if err != nil {
		return nil, err
	}
	v := &wire.Analysis{ID: a.ID, Kind: a.Kind, Status: a.Status, JobID: a.JobID, CreatedAt: a.CreatedAt.Format(time.RFC3339Nano),
		SubmittedBy: a.SubmittedBy, Location: a.Location, Error: a.Error}
	if a.FinishedAt != nil {
		v.FinishedAt = a.FinishedAt.Format(time.RFC3339Nano)
	}
	if a.Status == db.AnalysisQueued {
		// Not finished: its job says whether it runs, waits for a retry
		// (with the last error) or was given up (failed).
		j, err := s.store.Job(ctx, a.JobID)
		if err != nil {
			return nil, fmt.Errorf("job of analysis %s: %w", a.ID, err)
		}
		v.Status, v.Error = db.JobStatus(j, nil)
		if v.Status == db.JobDone {
			v.Status = db.JobRunning // finishing: the analysis row says done in the same transaction
		}
	}
	if a.Status == db.AnalysisDone {
		v.ResultType, v.ResultURL = a.ReplyType, "/v1/analyses/"+a.ID+"/result"
		if mt, _, err := mime.ParseMediaType(a.ReplyType); err == nil && (mt == "application/json" || strings.HasSuffix(mt, "+json")) {
			v.Result = a.Reply
		}
	}
	return v, nil
}

// AnalysisResult is GET /v1/analyses/{id}/result: a finished analysis'
// reply, byte for byte as the synchronous request would have had it.
func (s *Service) AnalysisResult(ctx context.Context, id string) (*Reply, error) {
	a, err := s.store.Analysis(ctx, id)
	if err != nil {
		return nil, err
	}
	if a.Status != db.AnalysisDone {
		return nil, &Error{Kind: db.ErrNotFound, Detail: fmt.Sprintf("analysis %s is %s; it has no result", id, a.Status)}
	}
	return &Reply{Status: a.ReplyStatus, ContentType: a.ReplyType, Body: a.Reply, Location: a.Location}, nil
}
