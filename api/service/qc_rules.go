package service

import (
	"context"
	"errors"
	"fmt"
	"net/http"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/drift"
)

// MaxQCRulesPoints bounds a series sent to POST /v1/qc/rules; evaluating
// one point costs well under a microsecond, so the bound is about the
// body, not the work.
const MaxQCRulesPoints = 100000

// QCRules is POST /v1/qc/rules: the drift rules (Westgard, EWMA, CUSUM) on
// a series the caller keeps elsewhere, against a given baseline or one
// estimated from the series' first baseline_runs values. It stores
// nothing, not even its reply under its key (calculate).
func (s *Service) QCRules(ctx context.Context, who Caller, idem *Idem, req *wire.QCRulesRequest) (*Reply, error) {
	return s.calculate(ctx, who, idem, func(context.Context) (plan, error) {
		r, err := qcRules(req)
		if err != nil {
			return plan{}, err
		}
		reply, err := jsonReply(http.StatusOK, r, "")
		return plan{reply: reply}, err
	})
}

func qcRules(req *wire.QCRulesRequest) (*wire.QCRulesResponse, error) {
	if len(req.Points) == 0 {
		return nil, Invalid("/points", "points are required")
	}
	if len(req.Points) > MaxQCRulesPoints {
		return nil, Invalid("/points", "at most %d points", MaxQCRulesPoints)
	}
	series := make([]drift.Point, len(req.Points))
	values := make([]float64, len(req.Points))
	for i, p := range req.Points {
		if p.Value == nil {
			return nil, Invalid(fmt.Sprintf("/points/%d/value", i), "value is required")
		}
		series[i] = drift.Point{Value: *p.Value, Group: p.Group}
		values[i] = *p.Value
		if p.Time != "" {
			t, err := time.Parse(time.RFC3339Nano, p.Time)
			if err != nil {
				return nil, Invalid(fmt.Sprintf("/points/%d/time", i), "time must be RFC 3339, got %q", p.Time)
			}
			series[i].Time = t
		}
		if err := checkText(fmt.Sprintf("/points/%d/group", i), p.Group); err != nil {
			return nil, err
		}
	}
	set := drift.Settings{Mode: drift.Mode(req.Mode), EWMALambda: req.EWMALambda, EWMAL: req.EWMAL, CUSUMK: req.CUSUMK, CUSUMH: req.CUSUMH}
	for i, name := range req.Rules {
		r, err := drift.ParseRule(name)
		if err != nil {
			return nil, Invalid(fmt.Sprintf("/rules/%d", i), "%v", err)
		}
		set.Rules |= drift.Set(r)
	}
	var base drift.Baseline
	source := db.BaselineExplicit
	switch {
	case req.Baseline != nil:
		if req.BaselineRuns != 0 {
			return nil, Invalid("/baseline_runs", "give baseline or baseline_runs, not both")
		}
		if req.Baseline.Mean == nil {
			return nil, Invalid("/baseline/mean", "mean is required")
		}
		if req.Baseline.SD == nil {
			return nil, Invalid("/baseline/sd", "sd is required")
		}
		base = drift.Baseline{Mean: *req.Baseline.Mean, SD: *req.Baseline.SD}
	default:
		b, err := drift.BaselineFrom(values, req.BaselineRuns)
		if err != nil {
			return nil, driftInvalid(err, "")
		}
		base, source = b, db.BaselineAuto
	}
	ch, err := drift.Evaluate(series, base, &set)
	if errors.Is(err, drift.ErrInvalid) {
		return nil, driftInvalid(err, "")
	}
	if err != nil {
		return nil, fmt.Errorf("evaluate series: %w", err)
	}
	out := &wire.QCRulesResponse{Baseline: wire.DriftBaseline{Mean: wire.Num(base.Mean), SD: wire.Num(base.SD), Source: source},
		Status: string(ch.Status), Points: make([]wire.QCRulesPoint, len(ch.Points))}
	if source == db.BaselineAuto {
		out.Baseline.Runs = req.BaselineRuns
		if out.Baseline.Runs == 0 {
			out.Baseline.Runs = drift.DefaultBaselineRuns
		}
	}
	for i, r := range ch.Points {
		out.Points[i] = wire.QCRulesPoint{Value: wire.Num(values[i]), Z: wire.Num(r.Z), EWMA: wire.Num(r.EWMA),
			EWMALimits: [2]wire.Num{wire.Num(r.EWMALo), wire.Num(r.EWMAHi)}, CUSUMHi: wire.Num(r.CUSUMHi), CUSUMLo: wire.Num(r.CUSUMLo),
			Violations: r.Violations.Strings(), Status: string(r.Status)}
		if out.Points[i].Violations == nil {
			out.Points[i].Violations = []string{}
		}
	}
	return out, nil
}
