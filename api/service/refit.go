package service

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"slices"
	"strconv"
	"strings"
	"time"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/cost"
	"sluice/fit/plate"
)

// MaxExclusions bounds the points one refit request may name.
const MaxExclusions = 1000

// refitPlan is a curve prepared for its refit: the points left, the
// original settings and seed, and what the new version stores.
type refitPlan struct {
	curve      fit.Curve
	settings   fit.Settings
	boot       *fit.BootSettings
	exclusions []byte // JSON array stored with the refit
	input      []byte // a single fit's input without the excluded points; nil for a plate curve
	key        string // a plate curve's key (without a version suffix)
}

// Refit is POST /v1/curves/{id}/refit: it fits the curve again without the
// excluded points (point indices of a single fit's input, or well names of
// a plate curve), with the original settings and bootstrap seed, and stores
// a new version that points at the old one (refit_of), with the exclusions
// and the reason. The old version stays as it was and readable; histories
// use the latest version. Leaving too few points is a 422 naming the rule.
//
// A single fit's refit stores the remaining points as its input, so the
// indices of a refit of a refit count in that input; a plate curve's
// exclusions accumulate (the well names of every version).
//
// A refit whose work (fit.CostOf, with the curve's stored bootstrap) is
// over the synchronous budget is queued like any other analysis: 202 with
// GET /v1/analyses/{id}, whose result is then the 201 reply.
func (s *Service) Refit(ctx context.Context, who Caller, idem *Idem, curveID string, req *wire.RefitRequest) (*Reply, error) {
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		old, rp, work, err := s.prepareRefit(ctx, curveID, req)
		if err != nil {
			return plan{}, err
		}
		if work > s.budget.Sync {
			// Over the synchronous budget (a large bootstrap, typically):
			// queued like any other analysis, run by RunAnalysis.
			return s.queue(who, analysisRefit, &queuedRequest{Refit: &queuedRefit{CurveID: curveID, Request: req}}, work)
		}
		return s.runRefit(ctx, who, old, rp, req.Reason)
	})
}

// queuedRefit is a refit waiting for its job: the curve and the request.
type queuedRefit struct {
	CurveID string             `json:"curve_id"`
	Request *wire.RefitRequest `json:"request"`
}

// prepareRefit validates a refit request against the stored curve and
// returns the curve, its refit plan and the refit's work (refused over
// the hard limit).
func (s *Service) prepareRefit(ctx context.Context, curveID string, req *wire.RefitRequest) (*db.CurveResult, *refitPlan, cost.Work, error) {
	if len(req.Exclude) == 0 {
		return nil, nil, 0, Invalid("/exclude", "name at least one point index or well to leave out")
	}
	if len(req.Exclude) > MaxExclusions {
		return nil, nil, 0, Invalid("/exclude", "more than %d exclusions", MaxExclusions)
	}
	if err := checkReason(req.Reason, true, "to refit a curve without some of its points"); err != nil {
		return nil, nil, 0, err
	}
	old, err := s.store.CurveResult(ctx, curveID)
	if err != nil {
		return nil, nil, 0, err
	}
	var rp *refitPlan
	if old.Kind == db.KindFit {
		rp, err = s.fitRefitPlan(old, req.Exclude)
	} else {
		rp, err = s.plateRefitPlan(ctx, old, req.Exclude)
	}
	if err != nil {
		return nil, nil, 0, err
	}
	free := len(rp.settings.Model.Params()) - len(rp.settings.Fixed)
	if len(rp.curve.Points) <= free {
		return nil, nil, 0, Invalid("/exclude", "too few points left: %d points remain and %s with %d free parameters needs more points than parameters (at least %d)",
			len(rp.curve.Points), rp.settings.Model, free, free+1)
	}
	work := fit.CostOf([]fit.Curve{rp.curve}, free, rp.boot)
	if err := s.budget.admit(work, "/exclude"); err != nil {
		return nil, nil, 0, err
	}
	return old, rp, work, nil
}

// runRefit fits a prepared refit and plans its records and reply.
func (s *Service) runRefit(ctx context.Context, who Caller, old *db.CurveResult, rp *refitPlan, reason string) (plan, error) {
	res, err := fit.Fit(rp.curve, &rp.settings)
	if err == nil && rp.boot != nil {
		err = fit.Bootstrap(ctx, res, rp.boot)
	}
	if err != nil {
		var pe *fit.PointError
		if errors.As(err, &pe) {
			return plan{}, Invalid("/exclude", "the points left cannot be fitted: %v", pe)
		}
		return plan{}, err
	}
	return s.refitCommit(who, old, rp, res, reason)
}

// fitRefitPlan prepares a single fit's refit: exclusions are indices of
// its stored input.
func (s *Service) fitRefitPlan(old *db.CurveResult, exclude []json.RawMessage) (*refitPlan, error) {
	var set wire.FitSettings
	var in wire.FitInput
	if err := json.Unmarshal(old.Settings, &set); err != nil {
		return nil, fmt.Errorf("curve %s: settings: %w", old.ID, err)
	}
	if err := json.Unmarshal(old.Input, &in); err != nil {
		return nil, fmt.Errorf("curve %s: input: %w", old.ID, err)
	}
	unit, err := ingest.ParseUnit(in.ConcUnit)
	if err != nil {
		return nil, fmt.Errorf("curve %s: unit: %w", old.ID, err)
	}
	drop := map[int]bool{}
	idx := make([]int, len(exclude))
	for i, raw := range exclude {
		var k int
		if err := json.Unmarshal(raw, &k); err != nil {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "a single fit's points are named by their index (0–%d), got %s", len(in.Points)-1, raw)
		}
		if k < 0 || k >= len(in.Points) {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "point %d does not exist: the fit has points 0–%d", k, len(in.Points)-1)
		}
		if drop[k] {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "point %d is named twice", k)
		}
		drop[k], idx[i] = true, k
	}
	rp := &refitPlan{}
	kept := wire.FitInput{ConcUnit: in.ConcUnit}
	for i, p := range in.Points {
		if drop[i] {
			continue
		}
		kept.Points = append(kept.Points, p)
		pt := fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response}
		if p.Weight != nil {
			pt.Weight = *p.Weight
		}
		rp.curve.Points = append(rp.curve.Points, pt)
	}
	rp.curve.ID = old.CompoundID
	if rp.input, err = json.Marshal(kept); err != nil {
		return nil, fmt.Errorf("encode refit input: %w", err)
	}
	slices.Sort(idx)
	if rp.exclusions, err = json.Marshal(idx); err != nil {
		return nil, fmt.Errorf("encode exclusions: %w", err)
	}
	model, err := fit.ParseModel(set.Model)
	if err != nil {
		return nil, fmt.Errorf("curve %s: model: %w", old.ID, err)
	}
	rp.settings = fit.Settings{Model: model, Fixed: set.Fixed, Confidence: set.Confidence, MaxHill: set.MaxHill}
	rp.boot = s.refitBoot(set.Bootstrap)
	return rp, nil
}

// plateRefitPlan prepares a plate curve's refit: exclusions are names of
// the curve's own sample, reference or vehicle wells; the normalisation
// keeps the plate's control means.
func (s *Service) plateRefitPlan(ctx context.Context, old *db.CurveResult, exclude []json.RawMessage) (*refitPlan, error) {
	p, err := s.store.Plate(ctx, old.PlateID)
	if err != nil {
		return nil, fmt.Errorf("plate of curve %s: %w", old.ID, err)
	}
	if p.Figures == nil {
		return nil, fmt.Errorf("plate %s of curve %s has no QC figures", p.ID, old.ID)
	}
	var set wire.PlateSettings
	if err := json.Unmarshal(p.Settings, &set); err != nil {
		return nil, fmt.Errorf("plate %s: settings: %w", p.ID, err)
	}
	rows, err := s.store.Wells(ctx, p.ID)
	if err != nil {
		return nil, fmt.Errorf("wells of %s: %w", p.ID, err)
	}
	format, err := plate.ParseFormat(strconv.Itoa(p.Format))
	if err != nil {
		return nil, fmt.Errorf("plate %s: %w", p.ID, err)
	}
	key, _, _ := strings.Cut(old.CurveKey, "#")
	// The wells of this curve: its compound's sample or reference wells at
	// its antagonist concentration, and the vehicle wells it takes.
	mine := map[string]bool{}
	for _, r := range rows {
		switch plate.Role(r.Role) {
		case plate.Sample, plate.Reference:
			mine[r.Well] = r.CompoundID == old.CompoundID && r.AntagonistID == old.AntagonistID && r.AntagonistConc == old.AntagonistConc
		case plate.Vehicle:
			mine[r.Well] = r.CompoundID == "" || r.CompoundID == old.CompoundID
		}
	}
	var names []string
	if old.RefitOf != "" {
		prev, err := s.store.CurveRefit(ctx, old.ID)
		if err != nil {
			return nil, fmt.Errorf("refit %s: %w", old.ID, err)
		}
		if err := json.Unmarshal(prev.Exclusions, &names); err != nil {
			return nil, fmt.Errorf("refit %s: exclusions: %w", old.ID, err)
		}
	}
	for i, raw := range exclude {
		var name string
		if err := json.Unmarshal(raw, &name); err != nil {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "a plate curve's points are named by their well (e.g. \"B7\"), got %s", raw)
		}
		w, err := format.ParseWell(name)
		if err != nil {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "%v", err)
		}
		name = format.Name(w)
		if !mine[name] {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "well %q is not a point of curve %s", name, key)
		}
		if slices.Contains(names, name) {
			return nil, Invalid(fmt.Sprintf("/exclude/%d", i), "well %s is already left out", name)
		}
		names = append(names, name)
	}
	slices.Sort(names)
	var wells []plate.PlateWell
	for _, r := range rows {
		if r.Value == nil || slices.Contains(names, r.Well) {
			continue
		}
		role := plate.Role(r.Role)
		if role == plate.Excluded || role == plate.Empty {
			continue
		}
		wells = append(wells, plate.PlateWell{Well: plate.Well{Row: r.Row, Col: r.Col}, Role: role, CompoundID: r.CompoundID,
			Conc: r.Conc, Value: *r.Value, AntagonistID: r.AntagonistID, AntagonistConc: r.AntagonistConc})
	}
	rp := &refitPlan{key: key}
	for _, cs := range plate.Curves(wells, plate.Mode(p.Mode), p.Figures.MaxMean, p.Figures.MinMean) {
		if cs.Key == key {
			rp.curve = cs.Curve
		}
	}
	if rp.exclusions, err = json.Marshal(names); err != nil {
		return nil, fmt.Errorf("encode exclusions: %w", err)
	}
	model, err := fit.ParseModel(set.Fit.Model)
	if err != nil {
		return nil, fmt.Errorf("plate %s: model: %w", p.ID, err)
	}
	rp.settings = fit.Settings{Model: model, Fixed: set.Fit.Fixed, Confidence: set.Fit.Confidence, MaxHill: set.Fit.MaxHill}
	rp.boot = s.refitBoot(set.Fit.Bootstrap)
	return rp, nil
}

// refitBoot is the original bootstrap with its stored seed; nil for none.
func (s *Service) refitBoot(b *wire.BootstrapIn) *fit.BootSettings {
	if b == nil || b.Seed == nil {
		return nil
	}
	return &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval),
		Seed: *b.Seed, Workers: s.fitWorkers}
}

// refitCommit plans the new version's row, its refit record, the audit
// entry and the reply (the new version as GET /v1/curves/{id} shows it).
func (s *Service) refitCommit(who Caller, old *db.CurveResult, rp *refitPlan, res *fit.Result, reason string) (plan, error) {
	now := s.now()
	nr := &db.CurveResult{ID: s.newID(), Kind: old.Kind, PlateID: old.PlateID, AssayID: old.AssayID, CompoundID: old.CompoundID,
		AntagonistID: old.AntagonistID, AntagonistConc: old.AntagonistConc, MeasuredAt: old.MeasuredAt, CreatedAt: now,
		SubmittedBy: who.Name, RefitOf: old.ID, Model: string(res.Model), Status: res.Status, EngineVersion: fit.EngineVersion,
		Settings: old.Settings, Labels: old.Labels, Params: storedParams(res)}
	nr.LogEC50, nr.Hill, nr.Top, nr.Bottom = estimateOf(nr.Params, "log_ec50"), estimateOf(nr.Params, "hill"),
		estimateOf(nr.Params, "top"), estimateOf(nr.Params, "bottom")
	if !res.Converged() {
		nr.LogEC50.Value = nil
	}
	if res.Boot != nil {
		nr.BootCols, nr.BootDraws = len(res.Params), res.Boot.Draws
	}
	var doc any
	if old.Kind == db.KindFit {
		nr.Input = rp.input
		sum := sha256.Sum256(rp.input)
		nr.InputSHA256 = hex.EncodeToString(sum[:])
		sf := wire.StoredFit{ID: nr.ID, CreatedAt: now.Format(time.RFC3339Nano), MeasuredAt: old.MeasuredAt.Format(time.RFC3339Nano),
			SubmittedBy: who.Name, AssayID: old.AssayID, CompoundID: old.CompoundID, RefitOf: old.ID, InputSHA256: nr.InputSHA256,
			FitResult: wire.FromFit(res)}
		if len(old.Labels) > 0 && string(old.Labels) != "{}" {
			if err := json.Unmarshal(old.Labels, &sf.Labels); err != nil {
				return plan{}, fmt.Errorf("curve %s: labels: %w", old.ID, err)
			}
		}
		doc = sf
	} else {
		nr.InputSHA256 = old.InputSHA256
		nr.CurveKey = rp.key + "#" + nr.ID // unique on the plate; the key before '#' is the curve's
		doc = wire.PlateCurve{Key: rp.key, CompoundID: old.CompoundID, AntagonistID: old.AntagonistID,
			AntagonistConc: old.AntagonistConc, FitResult: wire.FromFit(res)}
	}
	var err error
	if nr.Result, err = json.Marshal(doc); err != nil {
		return plan{}, fmt.Errorf("encode refit result: %w", err)
	}
	ref := &db.Refit{CurveID: nr.ID, RefitOf: old.ID, Exclusions: rp.exclusions, Reason: reason}
	view, err := curveView(potencyRowOf(nr), nil, ref)
	if err != nil {
		return plan{}, err
	}
	reply, err := jsonReply(http.StatusCreated, view, "/v1/curves/"+nr.ID)
	if err != nil {
		return plan{}, err
	}
	detail, err := json.Marshal(map[string]any{"refit_of": old.ID, "exclusions": json.RawMessage(rp.exclusions), "reason": reason})
	if err != nil {
		return plan{}, fmt.Errorf("audit detail: %w", err)
	}
	return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
		if err := w.InsertRefit(ctx, nr, ref); err != nil {
			return nil, fmt.Errorf("store refit of %s: %w", old.ID, err)
		}
		if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: "curve.refit", Target: nr.ID,
			Detail: detail}); err != nil {
			return nil, fmt.Errorf("audit refit of %s: %w", old.ID, err)
		}
		return reply, nil
	}}, nil
}

// estimateOf picks the named parameter's estimate with its interval: the
// bootstrap interval when there is one, else the Wald interval (as the
// store's columns hold it).
func estimateOf(ps []db.FitParam, name string) db.Estimate {
	for _, p := range ps {
		if p.Name != name {
			continue
		}
		if p.BootLo != nil || p.BootHi != nil {
			return db.Estimate{Value: p.Estimate, Lo: p.BootLo, Hi: p.BootHi}
		}
		return db.Estimate{Value: p.Estimate, Lo: p.WaldLo, Hi: p.WaldHi}
	}
	return db.Estimate{}
}

// potencyRowOf is a curve result about to be stored as a potency row.
func potencyRowOf(c *db.CurveResult) db.PotencyRow {
	return db.PotencyRow{ID: c.ID, Kind: c.Kind, PlateID: c.PlateID, CurveKey: c.CurveKey, AssayID: c.AssayID,
		CompoundID: c.CompoundID, MeasuredAt: c.MeasuredAt, CreatedAt: c.CreatedAt, RefitOf: c.RefitOf, Status: c.Status,
		LogEC50: c.LogEC50, Result: c.Result}
}
