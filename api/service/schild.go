package service

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net/http"
	"time"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/cost"
	"sluice/fit/schild"
)

// Limits on a Schild request: the control and 1–49 shifted curves.
const (
	MinSchildCurves      = 2
	MaxSchildCurves      = 50
	MinSchildCurvePoints = 5
)

// validateSchild converts a request; errors point at the field.
func validateSchild(req *wire.SchildRequest) ([]schild.Curve, *schild.Settings, error) {
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err == nil {
		unit, err = ingest.RequireUnit(unit, "conc_unit")
	}
	if err != nil {
		return nil, nil, Invalid("/conc_unit", "%v", err)
	}
	if err := errors.Join(checkText("/agonist_id", req.AgonistID), checkText("/antagonist_id", req.AntagonistID)); err != nil {
		return nil, nil, err
	}
	if len(req.Curves) < MinSchildCurves || len(req.Curves) > MaxSchildCurves {
		return nil, nil, Invalid("/curves", "give the control curve (antagonist_conc 0) and 1–%d shifted curves", MaxSchildCurves-1)
	}
	var curves []schild.Curve
	for i, sc := range req.Curves {
		if sc.AntagonistConc == nil || !(*sc.AntagonistConc >= 0) || math.IsInf(*sc.AntagonistConc, 0) {
			return nil, nil, Invalid(fmt.Sprintf("/curves/%d/antagonist_conc", i), "antagonist_conc is required, ≥ 0 (0 for the control)")
		}
		c := schild.Curve{AntagonistConc: unit.ToMolar(*sc.AntagonistConc)}
		if len(sc.Points) < MinSchildCurvePoints {
			return nil, nil, Invalid(fmt.Sprintf("/curves/%d/points", i), "a curve needs at least %d points", MinSchildCurvePoints)
		}
		for k, p := range sc.Points {
			if p.Conc == nil || p.Response == nil {
				return nil, nil, Invalid(fmt.Sprintf("/curves/%d/points/%d", i, k), "conc and response are required")
			}
			if !(*p.Conc >= 0) || math.IsInf(*p.Conc, 0) {
				return nil, nil, Invalid(fmt.Sprintf("/curves/%d/points/%d/conc", i, k), "concentration must be ≥ 0")
			}
			c.Points = append(c.Points, fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response})
		}
		curves = append(curves, c)
	}
	set := &schild.Settings{Confidence: req.Confidence}
	if req.Confidence != 0 && !(req.Confidence > 0 && req.Confidence < 1) {
		return nil, nil, Invalid("/confidence", "confidence must be in (0, 1)")
	}
	if b := req.Bootstrap; b != nil {
		set.Resamples = b.Resamples
		if set.Resamples == 0 {
			set.Resamples = fit.DefaultResamples
		}
		if set.Resamples < 1 || set.Resamples > fit.MaxResamples {
			return nil, nil, Invalid("/bootstrap/resamples", "resamples must be 1–%d", fit.MaxResamples)
		}
		if b.Seed != nil {
			set.Seed = *b.Seed
		}
	}
	return curves, set, nil
}

// analyzeSchild runs an analysis; a failure on valid input points at the
// curves.
func (s *Service) analyzeSchild(ctx context.Context, curves []schild.Curve, set *schild.Settings) (*schild.Result, error) {
	set.Workers = s.fitWorkers
	res, err := schild.Analyze(ctx, curves, set)
	if err == nil {
		return res, nil
	}
	if ctx.Err() != nil {
		return nil, fmt.Errorf("schild analysis: %w", ctx.Err())
	}
	var ce *schild.CurveError
	if errors.As(err, &ce) {
		return nil, Invalid(fmt.Sprintf("/curves/%d", ce.Index), "%v", ce.Err)
	}
	if errors.Is(err, fit.ErrInvalidInput) {
		return nil, Invalid("/curves", "%v", err)
	}
	return nil, Invalid("/curves", "the analysis failed: %v", err)
}

// CreateSchild is POST /v1/schild: a Schild analysis, stored (201 with its
// Location) unless req.Store is false (200); one over the synchronous
// budget is queued (202). raw is the body as sent; its SHA-256 is the
// run's input_sha256.
func (s *Service) CreateSchild(ctx context.Context, who Caller, idem *Idem, req *wire.SchildRequest, raw []byte) (*Reply, error) {
	sha := sha256.Sum256(raw)
	inputSHA := hex.EncodeToString(sha[:])
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		curves, set, w, err := s.prepareSchild(req)
		if err != nil {
			return plan{}, err
		}
		if w > s.budget.Sync {
			return s.queue(who, analysisSchild, &queuedRequest{Schild: req, InputSHA256: inputSHA}, w)
		}
		return s.runSchild(ctx, who, req, curves, set, inputSHA)
	})
}

// prepareSchild validates a Schild request and checks its work
// (schild.Cost) against the hard limit, naming the bootstrap's resamples
// when they drive it and the curves otherwise.
func (s *Service) prepareSchild(req *wire.SchildRequest) ([]schild.Curve, *schild.Settings, cost.Work, error) {
	curves, set, err := validateSchild(req)
	if err != nil {
		return nil, nil, 0, err
	}
	w, field := schild.Cost(curves, set), "/curves"
	if set.Resamples > 0 && w > 2*schild.Cost(curves, &schild.Settings{Confidence: set.Confidence}) {
		field = "/bootstrap/resamples"
	}
	if err := s.budget.admit(w, field); err != nil {
		return nil, nil, 0, err
	}
	return curves, set, w, nil
}

// runSchild analyses a prepared request and plans its reply and record.
func (s *Service) runSchild(ctx context.Context, who Caller, req *wire.SchildRequest, curves []schild.Curve, set *schild.Settings, inputSHA string) (plan, error) {
	res, err := s.analyzeSchild(ctx, curves, set)
	if err != nil {
		return plan{}, err
	}
	out := wire.FromSchild(res, curves, set.Seed)
	out.AgonistID, out.AntagonistID = req.AgonistID, req.AntagonistID
	if req.Store != nil && !*req.Store {
		r, err := jsonReply(http.StatusOK, out, "")
		return plan{reply: r}, err
	}
	now := s.now()
	out.ID, out.CreatedAt = s.newID(), now.Format(time.RFC3339Nano)
	reply, err := jsonReply(http.StatusCreated, out, "/v1/schild/"+out.ID)
	if err != nil {
		return plan{}, err
	}
	in, err := json.Marshal(req)
	if err != nil {
		return plan{}, fmt.Errorf("encode schild input: %w", err)
	}
	run := &db.SchildRun{ID: out.ID, CreatedAt: now, SubmittedBy: who.Name, AgonistID: req.AgonistID, AntagonistID: req.AntagonistID,
		EngineVersion: fit.EngineVersion, InputSHA256: inputSHA, Input: in, Result: reply.Body}
	return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
		if err := w.InsertSchildRun(ctx, run); err != nil {
			return nil, fmt.Errorf("store schild %s: %w", run.ID, err)
		}
		if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: "schild.create", Target: run.ID}); err != nil {
			return nil, fmt.Errorf("audit schild %s: %w", run.ID, err)
		}
		return reply, nil
	}}, nil
}

// SchildRun is GET /v1/schild/{id}: the stored run, its result as it was
// returned.
func (s *Service) SchildRun(ctx context.Context, id string) (*db.SchildRun, error) {
	return s.store.SchildRun(ctx, id)
}

// StoredSchild is a stored Schild analysis with its documents decoded.
type StoredSchild struct {
	Run     *db.SchildRun
	Request wire.SchildRequest
	Result  wire.SchildResponse
	// Unit is the request's concentration unit.
	Unit ingest.Unit
}

// StoredSchild reads a stored analysis and decodes its documents.
func (s *Service) StoredSchild(ctx context.Context, id string) (*StoredSchild, error) {
	run, err := s.store.SchildRun(ctx, id)
	if err != nil {
		return nil, err
	}
	st := &StoredSchild{Run: run}
	if err := json.Unmarshal(run.Result, &st.Result); err != nil {
		return nil, fmt.Errorf("stored schild %s: result: %w", id, err)
	}
	if len(run.Input) > 0 {
		if err := json.Unmarshal(run.Input, &st.Request); err != nil {
			return nil, fmt.Errorf("stored schild %s: input: %w", id, err)
		}
	}
	if st.Unit, err = ingest.StoredUnit(st.Request.ConcUnit); err != nil {
		return nil, fmt.Errorf("stored schild %s: unit: %w", id, err)
	}
	return st, nil
}
