package service

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"time"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/cost"
)

// Limits on a fit request.
const (
	MaxPoints      = 100_000
	MaxLabels      = 50
	MaxLabelLength = 200
)

// fitInput is a validated fit request, ready to fit.
type fitInput struct {
	curve    fit.Curve
	settings fit.Settings
	boot     *fit.BootSettings
	store    bool
	measured time.Time // the experiment time; zero means the upload time
	free     int       // parameters estimated
	work     cost.Work // fit.Cost of the request
	// newCompound: the compound_id is not in the catalogue yet; a stored
	// fit registers it (as a plate does not need to), so that single fits
	// and plates both accept a compound nobody registered.
	newCompound bool
}

// validateFit checks a request and converts it; every error points at a
// field. A bootstrap without a seed gets one here, written back into req so
// that it is stored and returned.
func (s *Service) validateFit(req *wire.FitRequest) (*fitInput, error) {
	model, err := fit.ParseModel(req.Model)
	if err != nil {
		return nil, Invalid("/model", "%v", err)
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err == nil {
		unit, err = ingest.RequireUnit(unit, "conc_unit")
	}
	if err != nil {
		return nil, Invalid("/conc_unit", "%v", err)
	}
	if len(req.Points) > MaxPoints {
		return nil, Invalid("/points", "%d points is more than the limit of %d", len(req.Points), MaxPoints)
	}
	in := &fitInput{store: req.Store == nil || *req.Store}
	for i, p := range req.Points {
		if p.Conc == nil {
			return nil, Invalid(fmt.Sprintf("/points/%d/conc", i), "conc is required")
		}
		if p.Response == nil {
			return nil, Invalid(fmt.Sprintf("/points/%d/response", i), "response is required")
		}
		if *p.Conc < 0 {
			return nil, Invalid(fmt.Sprintf("/points/%d/conc", i), "concentration %g is negative", *p.Conc)
		}
		pt := fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response}
		if p.Weight != nil {
			if *p.Weight <= 0 {
				return nil, Invalid(fmt.Sprintf("/points/%d/weight", i), "weight must be > 0; a weight of 0 does not leave a point out (remove the point instead), and is refused rather than counted as 1")
			}
			pt.Weight = *p.Weight
		}
		in.curve.Points = append(in.curve.Points, pt)
	}
	free := len(model.Params())
	for name := range req.Fixed {
		for _, p := range model.Params() {
			if p == name {
				free--
			}
		}
	}
	if len(req.Points) <= free {
		return nil, Invalid("/points", "%d points cannot fit %d free parameters of %s; send at least %d",
			len(req.Points), free, model, free+1)
	}
	if len(req.Labels) > MaxLabels {
		return nil, Invalid("/labels", "more than %d labels", MaxLabels)
	}
	for _, f := range []struct{ ptr, v string }{{"/assay_id", req.AssayID}, {"/compound_id", req.CompoundID}, {"/refit_of", req.RefitOf}} {
		if err := checkText(f.ptr, f.v); err != nil {
			return nil, err
		}
	}
	for k, v := range req.Labels {
		ptr := "/labels/" + EscapePointer(k)
		if err := errors.Join(checkText(ptr, k), checkText(ptr, v)); err != nil {
			return nil, err
		}
		if len(k) == 0 || len(k) > MaxLabelLength || len(v) > MaxLabelLength {
			return nil, Invalid(ptr, "label names must be 1–%d bytes and values at most %d", MaxLabelLength, MaxLabelLength)
		}
	}
	if req.MeasuredAt != "" {
		t, err := time.Parse(time.RFC3339Nano, req.MeasuredAt)
		if err != nil {
			return nil, Invalid("/measured_at", "%q is not an RFC 3339 time (e.g. 2026-11-03T09:30:00Z)", req.MeasuredAt)
		}
		in.measured = t.UTC().Truncate(time.Microsecond)
	}
	in.free = free
	in.settings = fit.Settings{Model: model, Fixed: req.Fixed, Confidence: req.Confidence, MaxHill: req.MaxHill,
		ActivityAlpha: req.ActivityAlpha, Window: req.Window, MinEffect: req.MinEffect}
	if b := req.Bootstrap; b != nil {
		in.boot = &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval),
			Workers: s.fitWorkers}
		if b.Seed == nil {
			seed := s.newSeed()
			b.Seed = &seed
		}
		in.boot.Seed = *b.Seed
	}
	// The settings are checked here, not by the fit, so that a request is
	// refused before it is costed or queued.
	if err := in.settings.Validate(); err != nil {
		return nil, err
	}
	if in.boot != nil {
		if err := in.boot.Validate(); err != nil {
			return nil, err
		}
	}
	return in, nil
}

// admitFit checks a fit's work (fit.Cost) against the budget, naming the
// bootstrap's resamples when they drive it and the points otherwise.
func (s *Service) admitFit(in *fitInput) error {
	curves := []fit.Curve{in.curve}
	w, field := fit.CostOf(curves, in.free, in.boot), "/points"
	if in.boot != nil && w > 2*fit.CostOf(curves, in.free, nil) {
		field = "/bootstrap/resamples"
	}
	in.work = w
	return s.budget.admit(w, field)
}

// checkRefs checks that the records a fit names exist. A compound that
// does not is accepted, as on a plate, and reported in in.newCompound
// for the fit to register.
func (s *Service) checkRefs(ctx context.Context, req *wire.FitRequest, in *fitInput) error {
	for _, ref := range []struct{ ptr, id, kind string }{
		{"/assay_id", req.AssayID, "assay"}, {"/compound_id", req.CompoundID, "compound"}, {"/refit_of", req.RefitOf, "fit"},
	} {
		if ref.id == "" || s.known.has(ref.kind, ref.id) {
			continue
		}
		var err error
		switch ref.kind {
		case "assay":
			_, err = s.store.Assay(ctx, ref.id)
		case "compound":
			_, err = s.store.Compound(ctx, ref.id)
		default:
			_, err = s.store.FitRun(ctx, ref.id)
		}
		if errors.Is(err, db.ErrNotFound) && ref.kind == "compound" {
			in.newCompound = true
			continue
		}
		if errors.Is(err, db.ErrNotFound) {
			return Invalid(ref.ptr, "no %s with id %q", ref.kind, ref.id)
		}
		if err != nil {
			return fmt.Errorf("look up %s %q: %w", ref.kind, ref.id, err)
		}
		if ref.kind != "fit" {
			s.known.add(ref.kind, ref.id)
		}
	}
	return nil
}

// Fit is POST /v1/fits: fit one curve and store it (201 with its
// Location) unless req.Store is false (200); a fit over the synchronous
// budget is queued (202). raw is the body as sent; its SHA-256 is the
// run's input_sha256.
func (s *Service) Fit(ctx context.Context, who Caller, idem *Idem, req *wire.FitRequest, raw []byte) (*Reply, error) {
	sha := sha256.Sum256(raw)
	inputSHA := hex.EncodeToString(sha[:])
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		in, err := s.prepareFit(ctx, req)
		if err != nil {
			return plan{}, err
		}
		if in.work > s.budget.Sync {
			return s.queue(who, analysisFit, &queuedRequest{Fit: req, InputSHA256: inputSHA}, in.work)
		}
		return s.runFit(ctx, who, req, in, inputSHA)
	})
}

// prepareFit validates a fit request, checks its work against the hard
// limit and the records it names.
func (s *Service) prepareFit(ctx context.Context, req *wire.FitRequest) (*fitInput, error) {
	in, err := s.validateFit(req)
	if err != nil {
		return nil, err
	}
	if err := s.admitFit(in); err != nil {
		return nil, err
	}
	if err := s.checkRefs(ctx, req, in); err != nil {
		return nil, err
	}
	return in, nil
}

// runFit fits a prepared request and plans its reply and records.
func (s *Service) runFit(ctx context.Context, who Caller, req *wire.FitRequest, in *fitInput, inputSHA string) (plan, error) {
	in.curve.ID = req.CompoundID
	start := time.Now()
	res, err := fit.Fit(in.curve, &in.settings)
	if err == nil && in.boot != nil {
		err = fit.Bootstrap(ctx, res, in.boot)
	}
	if err != nil {
		return plan{}, err // a *fit.PointError or *fit.SettingError: 422 with its pointer
	}
	var resamples, failed int
	if res.Boot != nil {
		resamples, failed = res.Boot.Resamples, res.Boot.Failed
	}
	s.obs.CurveFitted(string(res.Model), res.Status, time.Since(start), resamples, failed)

	out := wire.StoredFit{FitResult: wire.FromFit(res)}
	if !in.store {
		r, err := jsonReply(http.StatusOK, out, "")
		return plan{reply: r}, err
	}
	run, err := s.newFitRun(who, req, inputSHA, res, &out, in.measured)
	if err != nil {
		return plan{}, err
	}
	reply, err := jsonReply(http.StatusCreated, out, "/v1/fits/"+out.ID)
	if err != nil {
		return plan{}, err
	}
	run.Result = reply.Body
	detail, err := json.Marshal(map[string]string{"model": string(res.Model), "status": res.Status})
	if err != nil {
		return plan{}, fmt.Errorf("audit detail: %w", err)
	}
	return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
		if in.newCompound && req.CompoundID != "" {
			// Registered with its id as its name; a concurrent fit that
			// registered it first makes this one a conflict to retry.
			if err := w.InsertCompound(ctx, &db.Compound{ID: req.CompoundID, Name: req.CompoundID, CreatedAt: run.CreatedAt, CreatedBy: who.Name}); err != nil {
				return nil, fmt.Errorf("register compound %q: %w", req.CompoundID, err)
			}
			if err := w.InsertAudit(ctx, &db.AuditEntry{At: run.CreatedAt, Actor: who.Name, Action: "compound.create", Target: req.CompoundID}); err != nil {
				return nil, fmt.Errorf("audit compound %q: %w", req.CompoundID, err)
			}
		}
		if err := w.InsertFitRun(ctx, run); err != nil {
			return nil, fmt.Errorf("store fit %s: %w", run.ID, err)
		}
		if err := w.InsertAudit(ctx, &db.AuditEntry{At: run.CreatedAt, Actor: who.Name, Action: "fit.create", Target: run.ID,
			Detail: detail}); err != nil {
			return nil, fmt.Errorf("audit fit %s: %w", run.ID, err)
		}
		return reply, nil
	}}, nil
}

// newFitRun is the stored form of a fit; it fills out's provenance.
func (s *Service) newFitRun(who Caller, req *wire.FitRequest, inputSHA string, res *fit.Result, out *wire.StoredFit, measured time.Time) (*db.FitRun, error) {
	now := s.now()
	if measured.IsZero() {
		measured = now
	}
	out.ID = s.newID()
	out.CreatedAt = now.Format(time.RFC3339Nano)
	out.MeasuredAt = measured.Format(time.RFC3339Nano)
	out.SubmittedBy = who.Name
	out.AssayID, out.CompoundID, out.RefitOf, out.Labels = req.AssayID, req.CompoundID, req.RefitOf, req.Labels
	out.InputSHA256 = inputSHA
	run := &db.FitRun{ID: out.ID, CreatedAt: now, MeasuredAt: measured, SubmittedBy: who.Name, AssayID: req.AssayID,
		CompoundID: req.CompoundID, RefitOf: req.RefitOf, Model: string(res.Model), Status: res.Status,
		EngineVersion: fit.EngineVersion, InputSHA256: out.InputSHA256}
	if l := res.LogEC50().Estimate; res.HasPotency() {
		run.LogEC50 = &l
	}
	var err error
	run.Settings, err = json.Marshal(wire.FitSettings{Model: string(res.Model), Fixed: req.Fixed, Confidence: res.Confidence,
		MaxHill: req.MaxHill, Bootstrap: req.Bootstrap, ActivityAlpha: req.ActivityAlpha, Window: req.Window, MinEffect: req.MinEffect})
	if err != nil {
		return nil, fmt.Errorf("encode fit settings: %w", err)
	}
	run.Input, err = json.Marshal(wire.FitInput{ConcUnit: req.ConcUnit, Points: req.Points})
	if err != nil {
		return nil, fmt.Errorf("encode fit input: %w", err)
	}
	if len(req.Labels) > 0 {
		if run.Labels, err = json.Marshal(req.Labels); err != nil {
			return nil, fmt.Errorf("encode labels: %w", err)
		}
	}
	if res.Boot != nil {
		// The draws, so that a prediction from this fit (the potential
		// band) reuses them instead of refitting.
		run.BootCols, run.BootDraws = len(res.Params), res.Boot.Draws
	}
	for _, p := range res.Params {
		run.Params = append(run.Params, db.FitParam{Name: p.Name, Estimate: finite(p.Estimate), SE: finite(p.SE),
			WaldLo: finite(p.WaldLo), WaldHi: finite(p.WaldHi), BootLo: finite(p.BootLo), BootHi: finite(p.BootHi),
			Fixed: p.Fixed, AtBound: p.AtBound})
	}
	if res.Boot != nil {
		run.BootCols, run.BootDraws = len(res.Params), res.Boot.Draws
	}
	return run, nil
}

// finite returns nil for NaN and ±Inf, which SQL stores as NULL.
func finite(v float64) *float64 {
	if v != v || v > 1.7976931348623157e308 || v < -1.7976931348623157e308 {
		return nil
	}
	return &v
}

// FitRun is GET /v1/fits/{id}: the stored run, its result as it was
// returned.
func (s *Service) FitRun(ctx context.Context, id string) (*db.FitRun, error) {
	return s.store.FitRun(ctx, id)
}

// StoredFit is a stored fit with its documents decoded.
type StoredFit struct {
	Run      *db.FitRun
	Result   wire.StoredFit
	Input    wire.FitInput
	Settings wire.FitSettings
	// Unit is the input's concentration unit.
	Unit ingest.Unit
}

// StoredFit reads a stored fit and decodes its documents.
func (s *Service) StoredFit(ctx context.Context, id string) (*StoredFit, error) {
	run, err := s.FitRun(ctx, id)
	if err != nil {
		return nil, err
	}
	sf := &StoredFit{Run: run}
	if err := json.Unmarshal(run.Result, &sf.Result); err != nil {
		return nil, fmt.Errorf("stored fit %s: result: %w", id, err)
	}
	if err := json.Unmarshal(run.Input, &sf.Input); err != nil {
		return nil, fmt.Errorf("stored fit %s: input: %w", id, err)
	}
	if err := json.Unmarshal(run.Settings, &sf.Settings); err != nil {
		return nil, fmt.Errorf("stored fit %s: settings: %w", id, err)
	}
	if sf.Unit, err = ingest.StoredUnit(sf.Input.ConcUnit); err != nil {
		return nil, fmt.Errorf("stored fit %s: unit: %w", id, err)
	}
	return sf, nil
}

// Fits is GET /v1/fits: stored runs newest first, one page.
func (s *Service) Fits(ctx context.Context, f db.FitFilter) (*wire.FitList, error) {
	if f.Limit < 0 || f.Limit > db.MaxListLimit {
		return nil, BadParameter("limit", "%d is not a whole number from 1 to %d", f.Limit, db.MaxListLimit)
	}
	runs, next, err := s.store.FitRuns(ctx, f)
	if err != nil {
		return nil, err
	}
	out := &wire.FitList{Fits: make([]json.RawMessage, len(runs)), NextCursor: next, Caution: wire.Caution}
	for i, r := range runs {
		out.Fits[i] = r.Result
	}
	return out, nil
}
