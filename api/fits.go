package api

import (
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
	"strconv"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
)

// FitRequest is the body of POST /v1/fits.
type FitRequest struct {
	Model      string             `json:"model"`
	ConcUnit   string             `json:"conc_unit"`
	Points     []PointIn          `json:"points"`
	Fixed      map[string]float64 `json:"fixed,omitempty"`
	Confidence float64            `json:"confidence,omitempty"`
	MaxHill    float64            `json:"max_hill,omitempty"`
	Bootstrap  *BootstrapIn       `json:"bootstrap,omitempty"`
	// Store defaults to true.
	Store      *bool             `json:"store,omitempty"`
	AssayID    string            `json:"assay_id,omitempty"`
	CompoundID string            `json:"compound_id,omitempty"`
	RefitOf    string            `json:"refit_of,omitempty"`
	Labels     map[string]string `json:"labels,omitempty"`
}

// PointIn is one point as submitted, in conc_unit.
type PointIn struct {
	Conc     *float64 `json:"conc"`
	Response *float64 `json:"response"`
	Weight   *float64 `json:"weight,omitempty"`
}

// BootstrapIn asks for bootstrap intervals. Resamples 0 means 1000; a
// missing seed is drawn at random and returned, so the run can be repeated.
type BootstrapIn struct {
	Resamples int     `json:"resamples,omitempty"`
	Scheme    string  `json:"scheme,omitempty"`
	Interval  string  `json:"interval,omitempty"`
	Seed      *uint64 `json:"seed,omitempty"`
}

// Limits on a fit request.
const (
	MaxPoints      = 100_000
	MaxLabels      = 50
	MaxLabelLength = 200
)

// fitInput is a validated request, ready to fit.
type fitInput struct {
	curve    fit.Curve
	settings fit.Settings
	boot     *fit.BootSettings
	store    bool
}

// validate checks a request and converts it; every error points at a field.
func (s *Server) validateFit(req *FitRequest) (*fitInput, error) {
	model, err := fit.ParseModel(req.Model)
	if err != nil {
		return nil, invalidField("/model", "%v", err)
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		return nil, invalidField("/conc_unit", "%v", err)
	}
	if len(req.Points) > MaxPoints {
		return nil, invalidField("/points", "%d points is more than the limit of %d", len(req.Points), MaxPoints)
	}
	in := &fitInput{store: req.Store == nil || *req.Store}
	for i, p := range req.Points {
		if p.Conc == nil {
			return nil, invalidField(fmt.Sprintf("/points/%d/conc", i), "conc is required")
		}
		if p.Response == nil {
			return nil, invalidField(fmt.Sprintf("/points/%d/response", i), "response is required")
		}
		pt := fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response}
		if p.Weight != nil {
			if *p.Weight <= 0 {
				return nil, invalidField(fmt.Sprintf("/points/%d/weight", i), "weight must be > 0")
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
		return nil, invalidField("/points", "%d points cannot fit %d free parameters of %s; send at least %d",
			len(req.Points), free, model, free+1)
	}
	if len(req.Labels) > MaxLabels {
		return nil, invalidField("/labels", "more than %d labels", MaxLabels)
	}
	for k, v := range req.Labels {
		if len(k) == 0 || len(k) > MaxLabelLength || len(v) > MaxLabelLength {
			return nil, invalidField("/labels/"+escapePointer(k), "label names must be 1–%d bytes and values at most %d", MaxLabelLength, MaxLabelLength)
		}
	}
	in.settings = fit.Settings{Model: model, Fixed: req.Fixed, Confidence: req.Confidence, MaxHill: req.MaxHill}
	if b := req.Bootstrap; b != nil {
		in.boot = &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval),
			Workers: s.cfg.FitWorkers}
		if b.Seed != nil {
			in.boot.Seed = *b.Seed
		} else {
			var buf [8]byte
			randomBytes(buf[:])
			in.boot.Seed = binary.LittleEndian.Uint64(buf[:]) >> 11 // 53 bits: exact in JSON numbers
			b.Seed = &in.boot.Seed
		}
	}
	return in, nil
}

// createFit is POST /v1/fits: fit one curve, and store it unless told not to.
func (s *Server) createFit(c *gin.Context) {
	var req FitRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	in, err := s.validateFit(&req)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	ctx := c.Request.Context()
	for _, ref := range []struct{ ptr, id, kind string }{
		{"/assay_id", req.AssayID, "assay"}, {"/compound_id", req.CompoundID, "compound"}, {"/refit_of", req.RefitOf, "fit"},
	} {
		if ref.id == "" {
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
		if errors.Is(err, db.ErrNotFound) {
			s.writeProblem(c, invalidField(ref.ptr, "no %s with id %q", ref.kind, ref.id))
			return
		}
		if err != nil {
			s.writeProblem(c, err)
			return
		}
	}

	in.curve.ID = req.CompoundID
	start := time.Now()
	res, err := fit.Fit(in.curve, &in.settings)
	if err == nil && in.boot != nil {
		err = fit.Bootstrap(res, in.boot)
	}
	if err != nil {
		s.writeProblem(c, err) // a *fit.PointError or *fit.SettingError: 422 with its pointer
		return
	}
	s.metrics.fitDuration.WithLabelValues(string(res.Model)).Observe(time.Since(start).Seconds())
	s.metrics.fits.WithLabelValues(string(res.Model), res.Status).Inc()
	if res.Boot != nil {
		s.metrics.resamples.Add(float64(res.Boot.Resamples))
		s.metrics.failedRefits.Add(float64(res.Boot.Failed))
	}

	out := wire.StoredFit{FitResult: wire.FromFit(res)}
	if !in.store {
		b, _ := json.Marshal(out)
		s.respond(c, http.StatusOK, "application/json", b, nil)
		return
	}
	now := s.now()
	sum := sha256.Sum256(body)
	out.ID = s.newID()
	out.CreatedAt = now.Format(time.RFC3339Nano)
	out.SubmittedBy = actor(c)
	out.AssayID, out.CompoundID, out.RefitOf, out.Labels = req.AssayID, req.CompoundID, req.RefitOf, req.Labels
	out.InputSHA256 = hex.EncodeToString(sum[:])
	result, _ := json.Marshal(out)
	run := &db.FitRun{ID: out.ID, CreatedAt: now, SubmittedBy: out.SubmittedBy, AssayID: req.AssayID,
		CompoundID: req.CompoundID, RefitOf: req.RefitOf, Model: string(res.Model), Status: res.Status,
		EngineVersion: fit.EngineVersion, InputSHA256: out.InputSHA256, Result: result}
	if l := res.LogEC50().Estimate; res.Converged() {
		run.LogEC50 = &l
	}
	run.Settings, _ = json.Marshal(struct {
		Model      string             `json:"model"`
		Fixed      map[string]float64 `json:"fixed,omitempty"`
		Confidence float64            `json:"confidence"`
		MaxHill    float64            `json:"max_hill,omitempty"`
		Bootstrap  *BootstrapIn       `json:"bootstrap,omitempty"`
	}{string(res.Model), req.Fixed, res.Confidence, req.MaxHill, req.Bootstrap})
	run.Input, _ = json.Marshal(struct {
		ConcUnit string    `json:"conc_unit"`
		Points   []PointIn `json:"points"`
	}{req.ConcUnit, req.Points})
	if len(req.Labels) > 0 {
		run.Labels, _ = json.Marshal(req.Labels)
	}
	for _, p := range res.Params {
		run.Params = append(run.Params, db.FitParam{Name: p.Name, Estimate: finite(p.Estimate), SE: finite(p.SE),
			WaldLo: finite(p.WaldLo), WaldHi: finite(p.WaldHi), BootLo: finite(p.BootLo), BootHi: finite(p.BootHi),
			Fixed: p.Fixed, AtBound: p.AtBound})
	}
	c.Header("Location", "/v1/fits/"+out.ID)
	s.respond(c, http.StatusCreated, "application/json", result, func(w db.Writer) error {
		if err := w.InsertFitRun(ctx, run); err != nil {
			return err
		}
		return w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: out.SubmittedBy, Action: "fit.create", Target: out.ID,
			Detail: []byte(fmt.Sprintf(`{"model":%q,"status":%q}`, res.Model, res.Status))})
	})
}

// finite returns nil for NaN and ±Inf, which SQL stores as NULL.
func finite(v float64) *float64 {
	if v != v || v > 1.7976931348623157e308 || v < -1.7976931348623157e308 {
		return nil
	}
	return &v
}

// getFit is GET /v1/fits/{id}: the stored result, as it was returned.
func (s *Server) getFit(c *gin.Context) {
	run, err := s.store.FitRun(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Data(http.StatusOK, "application/json", run.Result)
}

// FitList is the body of GET /v1/fits.
type FitList struct {
	Fits       []json.RawMessage `json:"fits"`
	NextCursor string            `json:"next_cursor,omitempty"`
	Caution    string            `json:"caution"`
}

// listFits is GET /v1/fits?assay_id=&compound_id=&from=&to=&limit=&cursor=.
func (s *Server) listFits(c *gin.Context) {
	f := db.FitFilter{AssayID: c.Query("assay_id"), CompoundID: c.Query("compound_id"), Cursor: c.Query("cursor")}
	for _, tp := range []struct {
		name string
		dst  *time.Time
	}{{"from", &f.From}, {"to", &f.To}} {
		if v := c.Query(tp.name); v != "" {
			t, err := time.Parse(time.RFC3339Nano, v)
			if err != nil {
				s.writeProblem(c, badParameter(tp.name, "%q is not an RFC 3339 time (e.g. 2026-11-03T09:30:00Z)", v))
				return
			}
			*tp.dst = t
		}
	}
	if v := c.Query("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > db.MaxListLimit {
			s.writeProblem(c, badParameter("limit", "%q is not a whole number from 1 to %d", v, db.MaxListLimit))
			return
		}
		f.Limit = n
	}
	runs, next, err := s.store.FitRuns(c.Request.Context(), f)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	out := FitList{Fits: make([]json.RawMessage, len(runs)), NextCursor: next, Caution: wire.Caution}
	for i, r := range runs {
		out.Fits[i] = r.Result
	}
	c.JSON(http.StatusOK, out)
}
