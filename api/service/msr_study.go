package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/potency"
)

// MaxStudyItems bounds the plates or curve pairs of one MSR study.
const MaxStudyItems = 1000

// CreateMSRStudy is POST /v1/msr-studies: a replicate-experiment study of
// an assay (FACTS §4). Either two runs, each a list of plates, whose
// usable curves are paired by compound (a compound measured more than once
// in a run enters with its mean log EC50, potency.PairRuns), or explicit
// pairs of curves, each usable. The study is stored and readable by id.
func (s *Service) CreateMSRStudy(ctx context.Context, who Caller, idem *Idem, req *wire.MSRStudyRequest) (*Reply, error) {
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		if req.AssayID == "" {
			return plan{}, Invalid("/assay_id", "assay_id is required")
		}
		if _, err := s.store.Assay(ctx, req.AssayID); errors.Is(err, db.ErrNotFound) {
			return plan{}, Invalid("/assay_id", "no assay with id %q", req.AssayID)
		} else if err != nil {
			return plan{}, err
		}
		byPlates := len(req.Run1) > 0 || len(req.Run2) > 0
		if byPlates == (len(req.Pairs) > 0) {
			return plan{}, Invalid("", "give either run1 and run2 (plate ids) or pairs (curve ids), not both or neither")
		}
		var pairs []potency.Pair
		var err error
		if byPlates {
			pairs, err = s.pairPlates(ctx, req)
		} else {
			pairs, err = s.pairCurves(ctx, req)
		}
		if err != nil {
			return plan{}, err
		}
		st, err := potency.Replicate(pairs)
		if err != nil {
			return plan{}, Invalid("/pairs", "%v", err)
		}
		now := s.now()
		out := wire.MSRStudy{ID: s.newID(), AssayID: req.AssayID, CreatedAt: now.Format(time.RFC3339Nano), CreatedBy: who.Name,
			N: st.N, MeanDiff: wire.Num(st.MD), SDDiff: wire.Num(st.SD), MR: wire.Num(st.MR), MSR: wire.Num(st.MSR),
			RL: [2]wire.Num{wire.Num(st.RL.Lo), wire.Num(st.RL.Hi)}, LsA: [2]wire.Num{wire.Num(st.LsA.Lo), wire.Num(st.LsA.Hi)},
			Pass: st.Pass, Failed: []string{}, Caution: wire.Caution}
		for _, c := range st.Failed {
			out.Failed = append(out.Failed, string(c))
		}
		for _, p := range pairs {
			out.Pairs = append(out.Pairs, wire.MSRStudyPair{CompoundID: p.ID, Run1: wire.Num(p.Run1), Run2: wire.Num(p.Run2)})
		}
		reply, err := jsonReply(http.StatusCreated, out, "/v1/msr-studies/"+out.ID)
		if err != nil {
			return plan{}, err
		}
		reqJSON, err := json.Marshal(req)
		if err != nil {
			return plan{}, fmt.Errorf("encode study request: %w", err)
		}
		rec := &db.MSRStudy{ID: out.ID, AssayID: req.AssayID, CreatedAt: now, CreatedBy: who.Name, Request: reqJSON, Result: reply.Body}
		return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
			if err := w.InsertMSRStudy(ctx, rec); err != nil {
				return nil, fmt.Errorf("store MSR study %s: %w", rec.ID, err)
			}
			if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: "msr_study.create", Target: rec.ID,
				Detail: []byte(`{}`)}); err != nil {
				return nil, fmt.Errorf("audit MSR study %s: %w", rec.ID, err)
			}
			return reply, nil
		}}, nil
	})
}

// pairPlates pairs the usable curves of two runs' plates by compound.
func (s *Service) pairPlates(ctx context.Context, req *wire.MSRStudyRequest) ([]potency.Pair, error) {
	var runs [2][]potency.Measurement
	for k, ids := range [2][]string{req.Run1, req.Run2} {
		name := fmt.Sprintf("run%d", k+1)
		if len(ids) == 0 {
			return nil, Invalid("/"+name, "%s needs at least one plate", name)
		}
		if len(ids) > MaxStudyItems {
			return nil, Invalid("/"+name, "more than %d plates", MaxStudyItems)
		}
		for i, id := range ids {
			ptr := fmt.Sprintf("/%s/%d", name, i)
			p, err := s.store.Plate(ctx, id)
			if errors.Is(err, db.ErrNotFound) {
				return nil, Invalid(ptr, "no plate with id %q", id)
			}
			if err != nil {
				return nil, err
			}
			if p.AssayID != req.AssayID {
				return nil, Invalid(ptr, "plate %s belongs to assay %q, not %q", id, p.AssayID, req.AssayID)
			}
			if p.Status != db.PlateDone {
				return nil, Invalid(ptr, "plate %s is %s; a study needs its curves", id, p.Status)
			}
			ms, err := s.usableOfPlate(ctx, id)
			if err != nil {
				return nil, err
			}
			runs[k] = append(runs[k], ms...)
		}
	}
	pairs, err := potency.PairRuns(runs[0], runs[1])
	if err != nil {
		return nil, err
	}
	return pairs, nil
}

// usableOfPlate is the usable curves of a plate as measurements.
func (s *Service) usableOfPlate(ctx context.Context, plateID string) ([]potency.Measurement, error) {
	curves, err := s.store.PlateCurves(ctx, plateID)
	if err != nil {
		return nil, err
	}
	var out []potency.Measurement
	for _, c := range curves {
		// The latest version of each curve, its review and its call.
		m, ok, err := s.usableCurve(ctx, c.ID)
		if err != nil {
			return nil, err
		}
		if ok {
			out = append(out, m)
		}
	}
	return out, nil
}

// usableCurve follows a curve to its latest version and says whether that
// version is usable, with its measurement.
func (s *Service) usableCurve(ctx context.Context, id string) (potency.Measurement, bool, error) {
	row, err := s.store.CurvePotency(ctx, id)
	if err != nil {
		return potency.Measurement{}, false, err
	}
	rows, err := s.store.CompoundPotency(ctx, db.PotencyFilter{CompoundID: row.CompoundID, AssayID: row.AssayID})
	if err != nil {
		return potency.Measurement{}, false, err
	}
	// Walk refit_of links forward to the latest version.
	for row.Superseded {
		next := false
		for _, r := range rows {
			if r.RefitOf == row.ID {
				row, next = &r, true
				break
			}
		}
		if !next {
			break
		}
	}
	reviews, err := s.latestReviews(ctx, []db.PotencyRow{*row})
	if err != nil {
		return potency.Measurement{}, false, err
	}
	_, run, err := record(*row, reviews)
	if err != nil {
		return potency.Measurement{}, false, err
	}
	if classify(run) != "" {
		return potency.Measurement{}, false, nil
	}
	return potency.Measurement{ID: row.CompoundID, LogEC50: run.LogEC50}, true, nil
}

// pairCurves takes explicit pairs of curves; each must be usable.
func (s *Service) pairCurves(ctx context.Context, req *wire.MSRStudyRequest) ([]potency.Pair, error) {
	if len(req.Pairs) > MaxStudyItems {
		return nil, Invalid("/pairs", "more than %d pairs", MaxStudyItems)
	}
	pairs := make([]potency.Pair, len(req.Pairs))
	for i, p := range req.Pairs {
		var v [2]float64
		var compound string
		for k, id := range [2]string{p.Run1, p.Run2} {
			ptr := fmt.Sprintf("/pairs/%d/run%d", i, k+1)
			row, err := s.store.CurvePotency(ctx, id)
			if errors.Is(err, db.ErrNotFound) {
				return nil, Invalid(ptr, "no curve with id %q", id)
			}
			if err != nil {
				return nil, err
			}
			if row.AssayID != req.AssayID {
				return nil, Invalid(ptr, "curve %s belongs to assay %q, not %q", id, row.AssayID, req.AssayID)
			}
			reviews, err := s.latestReviews(ctx, []db.PotencyRow{*row})
			if err != nil {
				return nil, err
			}
			_, run, err := record(*row, reviews)
			if err != nil {
				return nil, err
			}
			if r := classify(run); r != "" {
				return nil, Invalid(ptr, "curve %s is not usable (%s)", id, r)
			}
			if k == 1 && row.CompoundID != compound {
				return nil, Invalid(ptr, "curve %s is of compound %q, its pair's of %q", id, row.CompoundID, compound)
			}
			compound, v[k] = row.CompoundID, run.LogEC50
		}
		pairs[i] = potency.Pair{ID: compound, Run1: v[0], Run2: v[1]}
	}
	return pairs, nil
}

// MSRStudy is GET /v1/msr-studies/{id}: the stored answer.
func (s *Service) MSRStudy(ctx context.Context, id string) (*db.MSRStudy, error) {
	return s.store.MSRStudy(ctx, id)
}
