package api

import (
	"bytes"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"mime"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// PlateRequest is the JSON body of POST /v1/plates.
type PlateRequest struct {
	AssayID    string            `json:"assay_id,omitempty"`
	Barcode    string            `json:"barcode"`
	Format     int               `json:"format"`
	MeasuredAt string            `json:"measured_at,omitempty"`
	ConcUnit   string            `json:"conc_unit,omitempty"`
	Mode       string            `json:"mode,omitempty"`
	Wells      []WellJSON        `json:"wells"`
	Fit        *PlateFitIn       `json:"fit,omitempty"`
	QC         *plate.Thresholds `json:"qc,omitempty"`
}

// WellJSON is one well of a plate or layout.
type WellJSON struct {
	Well           string   `json:"well"`
	Role           string   `json:"role"`
	CompoundID     string   `json:"compound_id,omitempty"`
	Conc           *float64 `json:"conc,omitempty"`
	Value          *float64 `json:"value,omitempty"`
	AntagonistID   string   `json:"antagonist_id,omitempty"`
	AntagonistConc *float64 `json:"antagonist_conc,omitempty"`
}

// PlateFitIn are the fit settings of a plate, as in POST /v1/fits.
type PlateFitIn struct {
	Model      string             `json:"model,omitempty"`
	Fixed      map[string]float64 `json:"fixed,omitempty"`
	Confidence float64            `json:"confidence,omitempty"`
	MaxHill    float64            `json:"max_hill,omitempty"`
	Bootstrap  *wire.BootstrapIn  `json:"bootstrap,omitempty"`
}

// plateSettings is what the worker needs besides the wells; stored as the
// plate's settings.
type plateSettings struct {
	Fit PlateFitIn        `json:"fit"`
	QC  *plate.Thresholds `json:"qc,omitempty"`
}

// locate makes field errors: a JSON Pointer for JSON bodies, a row for CSV.
type locate func(i int, field string) FieldError

func jsonLocate(i int, field string) FieldError {
	if i < 0 {
		return FieldError{Pointer: "/" + field}
	}
	return FieldError{Pointer: fmt.Sprintf("/wells/%d/%s", i, field)}
}

func wellError(loc locate, i int, field, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	fe := loc(i, field)
	fe.Detail = d
	return &service.Error{Kind: errInvalid, Detail: d, Fields: []FieldError{fe}}
}

// validPlate is a checked plate, ready to store.
type validPlate struct {
	p     db.Plate
	wells []db.WellRow
}

// validatePlate checks a plate in any of the three input forms.
func (s *Server) validatePlate(req *PlateRequest, wells []ingest.WellIn, loc locate) (*validPlate, error) {
	f, err := plate.ParseFormat(strconv.Itoa(req.Format))
	if err != nil {
		return nil, wellError(loc, -1, "format", "%v", err)
	}
	if b := strings.TrimSpace(req.Barcode); b == "" || len(b) > 100 || !plate.PrintableID(b) {
		return nil, wellError(loc, -1, "barcode", "barcode is required: printable text without control characters, at most 100 characters")
	}
	if !plate.PrintableID(req.AssayID) {
		return nil, wellError(loc, -1, "assay_id", "assay_id must be printable text without control characters")
	}
	mode, err := plate.ParseMode(req.Mode)
	if err != nil {
		return nil, wellError(loc, -1, "mode", "%v", err)
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		return nil, wellError(loc, -1, "conc_unit", "%v", err)
	}
	v := &validPlate{p: db.Plate{Barcode: strings.TrimSpace(req.Barcode), Format: f.Wells, ConcUnit: req.ConcUnit, Mode: string(mode),
		AssayID: req.AssayID, Status: db.PlateQueued}}
	if v.p.ConcUnit == "" {
		v.p.ConcUnit = "M"
	}
	if req.MeasuredAt != "" {
		t, err := time.Parse(time.RFC3339Nano, req.MeasuredAt)
		if err != nil {
			return nil, wellError(loc, -1, "measured_at", "%q is not an RFC 3339 time", req.MeasuredAt)
		}
		t = t.UTC()
		v.p.MeasuredAt = &t
	}
	checked, err := plate.Validate(f, plateWellInputs(wells, unit), plate.ForPlate)
	if err != nil {
		return nil, plateProblem(err, loc)
	}
	for _, w := range checked {
		row := db.WellRow{Well: w.Name, Row: w.Well.Row, Col: w.Well.Col, Role: string(w.Role), CompoundID: w.CompoundID,
			Conc: w.Conc, AntagonistID: w.AntagonistID, AntagonistConc: w.AntagonistConc}
		if w.HasValue {
			val := w.Value
			row.Value = &val
		}
		v.wells = append(v.wells, row)
	}
	// Fit settings, checked by the engine itself.
	set := plateSettings{QC: req.QC}
	if req.Fit != nil {
		set.Fit = *req.Fit
	}
	fs := fit.Settings{Model: fit.Model(set.Fit.Model), Fixed: set.Fit.Fixed, Confidence: set.Fit.Confidence, MaxHill: set.Fit.MaxHill}
	if err := fs.Validate(); err != nil {
		return nil, prefixPointer(err, "/fit")
	}
	if b := set.Fit.Bootstrap; b != nil {
		bs := fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval)}
		if err := bs.Validate(); err != nil {
			return nil, prefixPointer(err, "/fit")
		}
		if b.Seed == nil {
			var buf [8]byte
			randomBytes(buf[:])
			seed := binary.LittleEndian.Uint64(buf[:]) >> 11
			b.Seed = &seed
		}
	}
	if v.p.Settings, err = json.Marshal(set); err != nil {
		return nil, fmt.Errorf("plate settings: %w", err)
	}
	v.p.CurvesTotal = len(plate.Curves(plate.Read(checked), mode, 1, 0))
	return v, nil
}

// plateWellInputs converts wells as read to the plate rules' input, with
// concentrations in molar.
func plateWellInputs(wells []ingest.WellIn, unit ingest.Unit) []plate.WellInput {
	out := make([]plate.WellInput, len(wells))
	for i, w := range wells {
		out[i] = plate.WellInput{Well: w.Well, Role: w.Role, CompoundID: w.CompoundID, Conc: unit.ToMolar(w.Conc), HasConc: w.HasConc,
			Value: w.Value, HasValue: w.HasValue, AntagonistID: w.AntagonistID, AntagonistConc: unit.ToMolar(w.AntagonistConc)}
	}
	return out
}

// plateProblem turns the plate rules' errors into a problem whose fields
// point where loc says (a JSON Pointer, a CSV row or a parameter).
func plateProblem(err error, loc locate) error {
	var inv plate.Invalid
	if !errors.As(err, &inv) || len(inv) == 0 {
		return err
	}
	re := &service.Error{Kind: errInvalid, Detail: inv[0].Detail}
	for _, we := range inv {
		fe := loc(we.Index, we.Field)
		fe.Detail = we.Detail
		re.Fields = append(re.Fields, fe)
	}
	if len(inv) > 1 {
		re.Detail = fmt.Sprintf("%s (and %d more)", inv[0].Detail, len(inv)-1)
	}
	return re
}

// prefixPointer puts a fit settings error under a prefix (e.g. /fit).
func prefixPointer(err error, prefix string) error {
	fields := fieldsOf(err)
	for i := range fields {
		fields[i].Pointer = prefix + fields[i].Pointer
	}
	return &service.Error{Kind: errInvalid, Detail: err.Error(), Fields: fields}
}

// createPlate is POST /v1/plates: JSON, long CSV (text/csv), or a reader
// grid (text/csv with ?layout_id=). It stores the plate, its wells and its
// fit job in one transaction and answers 202 {plate_id, job_id}, or with
// ?wait=30s the finished plate.
func (s *Server) createPlate(c *gin.Context) {
	body, err := readBody(c)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	mt, _, _ := mime.ParseMediaType(c.GetHeader("Content-Type"))
	var req PlateRequest
	var wells []ingest.WellIn
	loc := locate(jsonLocate)
	switch {
	case mt == "text/csv" || mt == "application/csv":
		q := c.Request.URL.Query()
		req.AssayID, req.Barcode, req.MeasuredAt, req.ConcUnit, req.Mode =
			q.Get("assay_id"), q.Get("barcode"), q.Get("measured_at"), q.Get("conc_unit"), q.Get("mode")
		if req.Format, err = strconv.Atoi(q.Get("format")); err != nil {
			s.writeProblem(c, badParameter("format", "format (96, 384 or 1536) is required as a query parameter"))
			return
		}
		req.Fit, err = fitFromQuery(q.Get)
		if err != nil {
			s.writeProblem(c, err)
			return
		}
		if id := q.Get("layout_id"); id != "" {
			if u, err := ingest.ParseUnit(req.ConcUnit); err == nil && u != 1 {
				s.writeProblem(c, badParameter("conc_unit", "a layout's concentrations are stored in molar; conc_unit %q does not apply to a grid upload", req.ConcUnit))
				return
			}
			wells, err = s.gridWells(c, id, req.Format, body)
			loc = func(i int, field string) FieldError { return FieldError{Parameter: field} }
		} else {
			wells, err = ingest.ReadPlateCSV(bytes.NewReader(body))
			loc = func(i int, field string) FieldError {
				if i < 0 {
					return FieldError{Parameter: field}
				}
				return FieldError{Row: wells[i].Line, Detail: field}
			}
		}
		if err != nil {
			s.writeProblem(c, err)
			return
		}
	case mt == "" || mt == "application/json":
		if err := decodeJSON(body, &req); err != nil {
			s.writeProblem(c, err)
			return
		}
		wells = wellsFromJSON(req.Wells)
	default:
		s.writeProblem(c, &service.Error{Kind: errUnsupportedType, Detail: "Content-Type: want application/json or text/csv"})
		return
	}
	v, err := s.validatePlate(&req, wells, loc)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	ctx := c.Request.Context()
	if req.AssayID != "" {
		_, err := s.store.Assay(ctx, req.AssayID)
		if errors.Is(err, db.ErrNotFound) {
			err = wellError(loc, -1, "assay_id", "no assay with id %q", req.AssayID)
		}
		if err != nil {
			s.writeProblem(c, err)
			return
		}
	}
	now := s.now()
	sum := sha256.Sum256(body)
	v.p.ID, v.p.CreatedAt, v.p.SubmittedBy, v.p.InputSHA256 = s.newID(), now, actor(c), hex.EncodeToString(sum[:])
	var jobID int64
	write := func(w db.Writer) error {
		// The job first: it needs a real transaction, and the worker can
		// see it only once the plate below commits with it.
		id, err := w.EnqueuePlateFit(ctx, v.p.ID)
		if err != nil {
			return err
		}
		jobID, v.p.JobID = id, id
		if err := w.InsertPlate(ctx, &v.p, v.wells); err != nil {
			return err
		}
		detail, err := json.Marshal(map[string]any{"barcode": v.p.Barcode, "wells": len(v.wells)})
		if err != nil {
			return fmt.Errorf("audit of plate %s: %w", v.p.ID, err)
		}
		return w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: v.p.SubmittedBy, Action: "plate.create", Target: v.p.ID, Detail: detail})
	}
	// The job ID is known only inside the transaction: the body is built
	// there, after the write, and build hands it to the idempotency record.
	var resp []byte
	writeAndBuild := func(w db.Writer) error {
		if err := write(w); err != nil {
			return err
		}
		var err error
		resp, err = json.Marshal(gin.H{"plate_id": v.p.ID, "job_id": jobID})
		return err
	}
	build := func() []byte { return resp }
	if wait := c.Query("wait"); wait != "" {
		d, err := time.ParseDuration(wait)
		if err != nil || d < 0 || d > 5*time.Minute {
			s.writeProblem(c, badParameter("wait", "%q is not a duration up to 5m (e.g. 30s)", wait))
			return
		}
		// Submit (the 202 is what a retry replays), then wait.
		if _, stored := s.commitBuilt(c, http.StatusAccepted, "application/json", build, writeAndBuild); stored {
			s.waitForPlate(c, v.p.ID, d)
		}
		return
	}
	c.Header("Location", "/v1/plates/"+v.p.ID)
	s.respondBuilt(c, http.StatusAccepted, "application/json", build, writeAndBuild)
}

// wellsFromJSON turns wells as JSON sends them into wells as read.
func wellsFromJSON(ws []WellJSON) []ingest.WellIn {
	out := make([]ingest.WellIn, 0, len(ws))
	for _, w := range ws {
		in := ingest.WellIn{Well: w.Well, Role: w.Role, CompoundID: w.CompoundID, AntagonistID: w.AntagonistID}
		if w.Conc != nil {
			in.Conc, in.HasConc = *w.Conc, true
		}
		if w.Value != nil {
			in.Value, in.HasValue = *w.Value, true
		}
		if w.AntagonistConc != nil {
			in.AntagonistConc = *w.AntagonistConc
		}
		out = append(out, in)
	}
	return out
}

// fitFromQuery reads the fit settings of a CSV upload.
func fitFromQuery(get func(string) string) (*PlateFitIn, error) {
	f := &PlateFitIn{Model: get("model")}
	if r := get("resamples"); r != "" || get("seed") != "" || get("scheme") != "" || get("interval") != "" {
		b := &wire.BootstrapIn{Scheme: get("scheme"), Interval: get("interval")}
		if r != "" {
			n, err := strconv.Atoi(r)
			if err != nil {
				return nil, badParameter("resamples", "%q is not a whole number", r)
			}
			b.Resamples = n
		}
		if sd := get("seed"); sd != "" {
			n, err := strconv.ParseUint(sd, 10, 64)
			if err != nil {
				return nil, badParameter("seed", "%q is not a whole number ≥ 0", sd)
			}
			b.Seed = &n
		}
		f.Bootstrap = b
	}
	return f, nil
}

// gridWells combines a reader grid with a saved layout.
func (s *Server) gridWells(c *gin.Context, layoutID string, format int, body []byte) ([]ingest.WellIn, error) {
	l, err := s.store.Layout(c.Request.Context(), layoutID)
	if errors.Is(err, db.ErrNotFound) {
		return nil, badParameter("layout_id", "no layout with id %q", layoutID)
	}
	if err != nil {
		return nil, err
	}
	if l.Format != format {
		return nil, badParameter("format", "layout %s is for %d-well plates, not %d", layoutID, l.Format, format)
	}
	f, err := plate.ParseFormat(strconv.Itoa(format))
	if err != nil {
		return nil, badParameter("format", "%v", err)
	}
	grid, err := ingest.ReadGrid(bytes.NewReader(body), f)
	if err != nil {
		return nil, err
	}
	var lw []WellJSON
	if err := json.Unmarshal(l.Wells, &lw); err != nil {
		return nil, fmt.Errorf("stored layout %s: %w", layoutID, err)
	}
	out := wellsFromJSON(lw)
	for i := range out {
		pos, err := f.ParseWell(out[i].Well)
		if err != nil {
			return nil, fmt.Errorf("stored layout %s: %w", layoutID, err)
		}
		out[i].Value, out[i].HasValue = grid[f.Name(pos)]
	}
	return out, nil
}

// LayoutRequest is the body of POST /v1/layouts.
type LayoutRequest struct {
	ID       string     `json:"id"`
	Name     string     `json:"name"`
	Format   int        `json:"format"`
	ConcUnit string     `json:"conc_unit,omitempty"`
	Wells    []WellJSON `json:"wells"`
}

// createLayout is POST /v1/layouts: a plate map (wells → role, compound,
// concentration) reused by reader-grid uploads.
func (s *Server) createLayout(c *gin.Context) {
	var req LayoutRequest
	if _, ok := s.readJSON(c, &req); !ok {
		return
	}
	if !service.ValidID(req.ID) {
		s.writeProblem(c, invalidField("/id", "id %q must be 1–100 letters, digits or ._:-", req.ID))
		return
	}
	if !plate.PrintableID(req.Name) {
		s.writeProblem(c, invalidField("/name", "name must be printable text without control characters, at most %d bytes", plate.MaxIDLen))
		return
	}
	f, err := plate.ParseFormat(strconv.Itoa(req.Format))
	if err != nil {
		s.writeProblem(c, invalidField("/format", "%v", err))
		return
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		s.writeProblem(c, invalidField("/conc_unit", "%v", err))
		return
	}
	checked, err := plate.Validate(f, plateWellInputs(wellsFromJSON(req.Wells), unit), plate.ForLayout)
	if err != nil {
		s.writeProblem(c, plateProblem(err, jsonLocate))
		return
	}
	// Stored canonical and in molar, so that plates using the layout need
	// no unit.
	for i := range checked {
		lw, cw := &req.Wells[i], &checked[i]
		lw.Well = cw.Name
		if lw.Conc != nil {
			lw.Conc = &cw.Conc
		}
		if lw.AntagonistConc != nil {
			lw.AntagonistConc = &cw.AntagonistConc
		}
	}
	wellsJSON, err := json.Marshal(req.Wells)
	if err != nil {
		s.writeProblem(c, fmt.Errorf("layout %s wells: %w", req.ID, err))
		return
	}
	now := s.now()
	out, err := json.Marshal(gin.H{"id": req.ID, "name": req.Name, "format": f.Wells, "wells": len(req.Wells), "conc_unit": "M"})
	if err != nil {
		s.writeProblem(c, fmt.Errorf("layout %s response: %w", req.ID, err))
		return
	}
	ctx := c.Request.Context()
	c.Header("Location", "/v1/layouts/"+req.ID)
	s.respond(c, http.StatusCreated, "application/json", out, func(w db.Writer) error {
		return w.InsertLayout(ctx, &db.Layout{ID: req.ID, Name: req.Name, Format: f.Wells, Wells: wellsJSON, CreatedAt: now, CreatedBy: actor(c)})
	})
}

// PlateView is GET /v1/plates/{id}.
type PlateView struct {
	PlateID    string            `json:"plate_id"`
	Barcode    string            `json:"barcode"`
	Format     int               `json:"format"`
	AssayID    string            `json:"assay_id,omitempty"`
	MeasuredAt string            `json:"measured_at,omitempty"`
	Mode       string            `json:"mode"`
	Status     string            `json:"status"`
	JobID      int64             `json:"job_id"`
	Progress   Progress          `json:"progress"`
	QC         json.RawMessage   `json:"qc"`
	Curves     []json.RawMessage `json:"curves"`
	Schild     []json.RawMessage `json:"schild,omitempty"`
	Error      string            `json:"error,omitempty"`
	Caution    string            `json:"caution"`
}

// Progress counts fitted curves.
type Progress struct {
	Done  int `json:"done"`
	Total int `json:"total"`
}

func (s *Server) plateView(c *gin.Context, id string) (*PlateView, error) {
	ctx := c.Request.Context()
	p, err := s.store.Plate(ctx, id)
	if err != nil {
		return nil, err
	}
	v := &PlateView{PlateID: p.ID, Barcode: p.Barcode, Format: p.Format, AssayID: p.AssayID, Mode: p.Mode, Status: p.Status,
		JobID: p.JobID, Progress: Progress{p.CurvesDone, p.CurvesTotal}, QC: p.QC, Error: p.Error, Caution: wire.Caution,
		Curves: []json.RawMessage{}}
	if p.MeasuredAt != nil {
		v.MeasuredAt = p.MeasuredAt.Format(time.RFC3339)
	}
	if v.QC == nil {
		v.QC = json.RawMessage("null")
	}
	if p.Status == db.PlateDone {
		cs, err := s.store.PlateCurves(ctx, id)
		if err != nil {
			return nil, err
		}
		for _, cv := range cs {
			v.Curves = append(v.Curves, cv.Result)
		}
		runs, err := s.store.PlateSchildRuns(ctx, id)
		if err != nil {
			return nil, err
		}
		for _, r := range runs {
			v.Schild = append(v.Schild, r.Result)
		}
	}
	return v, nil
}

func (s *Server) getPlate(c *gin.Context) {
	v, err := s.plateView(c, c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}

// waitForPlate polls until the plate is done or failed, or d passes; then
// answers 200 with the plate, or 202 with where to look.
func (s *Server) waitForPlate(c *gin.Context, id string, d time.Duration) {
	deadline := time.Now().Add(d)
	for {
		p, err := s.store.Plate(c.Request.Context(), id)
		if err != nil {
			s.writeProblem(c, err)
			return
		}
		if p.Status == db.PlateDone || p.Status == db.PlateFailed {
			s.getPlateByID(c, id)
			return
		}
		if time.Now().After(deadline) || c.Request.Context().Err() != nil {
			c.Header("Location", "/v1/plates/"+id)
			c.JSON(http.StatusAccepted, gin.H{"plate_id": id, "job_id": p.JobID})
			return
		}
		time.Sleep(25 * time.Millisecond)
	}
}

func (s *Server) getPlateByID(c *gin.Context, id string) {
	v, err := s.plateView(c, id)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}

// JobView is GET /v1/jobs/{id}.
type JobView struct {
	ID       int64    `json:"id"`
	PlateID  string   `json:"plate_id"`
	Status   string   `json:"status"` // queued, running, done, failed
	Attempt  int      `json:"attempt"`
	Progress Progress `json:"progress"`
	Error    string   `json:"error,omitempty"`
}

func (s *Server) getJob(c *gin.Context) {
	id, err := strconv.ParseInt(c.Param("id"), 10, 64)
	if err != nil {
		s.writeProblem(c, &service.Error{Kind: db.ErrNotFound, Detail: "no job " + c.Param("id")})
		return
	}
	ctx := c.Request.Context()
	j, err := s.store.Job(ctx, id)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	p, err := s.store.PlateByJob(ctx, id)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	v := JobView{ID: id, PlateID: p.ID, Attempt: j.Attempt, Progress: Progress{p.CurvesDone, p.CurvesTotal}}
	v.Status, v.Error = db.JobStatus(j, p)
	c.JSON(http.StatusOK, v)
}
