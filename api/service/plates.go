package service

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"net/http"
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

// PlateForm is how a plate was sent; it decides where an error points.
type PlateForm int

const (
	// PlateJSON: a JSON body; errors are JSON Pointers (/wells/3/conc).
	PlateJSON PlateForm = iota
	// PlateCSV: a long CSV body with the plate fields as query parameters;
	// a well's error names its CSV row and column, a plate field's its
	// parameter.
	PlateCSV
	// PlateGrid: a reader's grid with a saved layout (LayoutID); a plate
	// field's error names its parameter, a well's names the well in its
	// detail (e.g. a read well the grid has no value for).
	PlateGrid
)

// PlateSubmission is a plate as the handler decoded it: the plate fields
// and fit settings in Plate (its Wells unused for CSV and grid), and for
// a long CSV the wells as read (ingest.ReadPlateCSV, with their lines).
// A grid is read here (ingest.ReadGrid) from Raw, against the format of
// its layout LayoutID.
type PlateSubmission struct {
	Form     PlateForm
	Plate    wire.PlateRequest
	Wells    []ingest.WellIn
	LayoutID string
	// Raw is the body as sent; its SHA-256 is the plate's input_sha256.
	Raw []byte
}

// MaxBarcode bounds a plate's barcode in bytes.
const MaxBarcode = 100

// validPlate is a checked plate, ready to store.
type validPlate struct {
	p     db.Plate
	wells []db.WellRow
	// work is the cost model's estimate of the plate's job (plateWork),
	// which scales the job's timeout.
	work cost.Work
}

// SubmitPlate is POST /v1/plates: it validates the plate with the plate
// rules (plate.Validate), then stores the plate, its wells, its fit job and
// its audit entry in one transaction through the idempotent write path,
// and answers 202 {plate_id, job_id}. The accepted plate is returned
// beside the reply, for a replayed reply too, so that a caller can wait
// for it (WaitPlate).
func (s *Service) SubmitPlate(ctx context.Context, who Caller, idem *Idem, sub *PlateSubmission) (*Reply, *wire.PlateAccepted, error) {
	r, err := s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		wells := sub.Wells
		if sub.Form == PlateGrid {
			var err error
			if wells, err = s.gridWells(ctx, sub); err != nil {
				return plan{}, err
			}
		} else if sub.Form == PlateJSON {
			wells = WellsIn(sub.Plate.Wells)
		}
		loc := locator(sub.Form, wells)
		v, err := s.validatePlate(&sub.Plate, wells, loc)
		if err != nil {
			return plan{}, err
		}
		if id := sub.Plate.AssayID; id != "" {
			_, err := s.store.Assay(ctx, id)
			if errors.Is(err, db.ErrNotFound) {
				return plan{}, locatedError(loc, -1, "assay_id", "no assay with id %q", id)
			}
			if err != nil {
				return plan{}, fmt.Errorf("look up assay %q: %w", id, err)
			}
		}
		now := s.now()
		sum := sha256.Sum256(sub.Raw)
		v.p.ID, v.p.CreatedAt, v.p.SubmittedBy, v.p.InputSHA256 = s.newID(), now, who.Name, hex.EncodeToString(sum[:])
		detail, err := json.Marshal(map[string]any{"barcode": v.p.Barcode, "wells": len(v.wells)})
		if err != nil {
			return plan{}, fmt.Errorf("audit detail of plate %s: %w", v.p.ID, err)
		}
		return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
			// The job first: the worker can see it only once the plate
			// below commits with it.
			o := jobOpts(v.work)
			o.Small = s.budget.smallPlate(v.work)
			jobID, err := w.EnqueuePlateFit(ctx, v.p.ID, o)
			if err != nil {
				return nil, fmt.Errorf("enqueue plate %s: %w", v.p.ID, err)
			}
			v.p.JobID = jobID
			if err := w.InsertPlate(ctx, &v.p, v.wells); err != nil {
				return nil, fmt.Errorf("store plate %s: %w", v.p.ID, err)
			}
			if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: "plate.create", Target: v.p.ID,
				Detail: detail}); err != nil {
				return nil, fmt.Errorf("audit plate %s: %w", v.p.ID, err)
			}
			return jsonReply(http.StatusAccepted, wire.PlateAccepted{PlateID: v.p.ID, JobID: jobID}, "/v1/plates/"+v.p.ID)
		}}, nil
	})
	if err != nil {
		return nil, nil, err
	}
	var acc wire.PlateAccepted
	if err := json.Unmarshal(r.Body, &acc); err != nil {
		return nil, nil, fmt.Errorf("plate reply: %w", err)
	}
	r.Location = "/v1/plates/" + acc.PlateID // not stored with a replayed reply
	return r, &acc, nil
}

// validatePlate checks a plate's fields, its wells (plate.Validate) and
// its fit settings, and converts them for the store. A bootstrap without
// a seed gets one here, stored with the settings.
func (s *Service) validatePlate(req *wire.PlateRequest, wells []ingest.WellIn, loc Locate) (*validPlate, error) {
	f, err := plate.ParseFormat(strconv.Itoa(req.Format))
	if err != nil {
		return nil, locatedError(loc, -1, "format", "%v", err)
	}
	if b := strings.TrimSpace(req.Barcode); b == "" || len(b) > MaxBarcode || !plate.PrintableID(b) {
		return nil, locatedError(loc, -1, "barcode", "barcode is required: printable text without control characters, at most %d bytes", MaxBarcode)
	}
	if !plate.PrintableID(req.AssayID) {
		return nil, locatedError(loc, -1, "assay_id", "assay_id must be printable text without control characters")
	}
	mode, err := plate.ParseMode(req.Mode)
	if err != nil {
		return nil, locatedError(loc, -1, "mode", "%v", err)
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		return nil, locatedError(loc, -1, "conc_unit", "%v", err)
	}
	if unit == ingest.NoUnit && sendsConc(wells) {
		return nil, locatedError(loc, -1, "conc_unit", "conc_unit is required whenever concentrations are sent (M, mM, uM, nM or pM): Sluice does not guess whether a number is molar or nanomolar")
	}
	v := &validPlate{p: db.Plate{Barcode: strings.TrimSpace(req.Barcode), Format: f.Wells, ConcUnit: unit.String(), Mode: string(mode),
		AssayID: req.AssayID, Status: db.PlateQueued}}
	if v.p.ConcUnit == "" { // no concentration anywhere: nothing to convert
		v.p.ConcUnit = "M"
	}
	if req.MeasuredAt != "" {
		t, err := time.Parse(time.RFC3339Nano, req.MeasuredAt)
		if err != nil {
			return nil, locatedError(loc, -1, "measured_at", "%q is not an RFC 3339 time", req.MeasuredAt)
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
	set := wire.PlateSettings{QC: req.QC}
	if req.QC != nil {
		if field, err := req.QC.Check(); err != nil {
			return nil, Invalid("/qc/"+field, "%v", err)
		}
	}
	if req.Fit != nil {
		set.Fit = *req.Fit
	}
	fs := fit.Settings{Model: fit.Model(set.Fit.Model), Fixed: set.Fit.Fixed, Confidence: set.Fit.Confidence, MaxHill: set.Fit.MaxHill,
		ActivityAlpha: set.Fit.ActivityAlpha, Window: set.Fit.PlateWindow(), MinEffect: set.Fit.MinEffect}
	if err := fs.Validate(); err != nil {
		return nil, prefixPointer(err, "/fit")
	}
	var bs *fit.BootSettings
	if b := set.Fit.Bootstrap; b != nil {
		bs = &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval)}
		if err := bs.Validate(); err != nil {
			return nil, prefixPointer(err, "/fit")
		}
		if b.Seed == nil {
			seed := s.newSeed()
			b.Seed = &seed
		}
	}
	if v.p.Settings, err = json.Marshal(set); err != nil {
		return nil, fmt.Errorf("plate settings: %w", err)
	}
	curves := plate.Curves(plate.Read(checked), mode, 1, 0)
	v.p.CurvesTotal, v.work = len(curves), plateWork(curves, &fs, bs)
	return v, nil
}

// gridWells reads a reader grid and combines it with its saved layout:
// the layout's wells, each with the grid's value at its place.
func (s *Service) gridWells(ctx context.Context, sub *PlateSubmission) ([]ingest.WellIn, error) {
	if u, err := ingest.ParseUnit(sub.Plate.ConcUnit); err == nil && u != ingest.NoUnit && u != ingest.Molar {
		return nil, BadParameter("conc_unit", "a layout's concentrations are stored in molar; conc_unit %q does not apply to a grid upload", sub.Plate.ConcUnit)
	}
	sub.Plate.ConcUnit = "M" // the layout's unit: it was required when the layout was saved
	l, err := s.store.Layout(ctx, sub.LayoutID)
	if errors.Is(err, db.ErrNotFound) {
		return nil, BadParameter("layout_id", "no layout with id %q", sub.LayoutID)
	}
	if err != nil {
		return nil, fmt.Errorf("look up layout %q: %w", sub.LayoutID, err)
	}
	if l.Format != sub.Plate.Format {
		return nil, BadParameter("format", "layout %s is for %d-well plates, not %d", sub.LayoutID, l.Format, sub.Plate.Format)
	}
	f, err := plate.ParseFormat(strconv.Itoa(l.Format))
	if err != nil {
		return nil, fmt.Errorf("stored layout %s: %w", sub.LayoutID, err)
	}
	grid, err := ingest.ReadGrid(bytes.NewReader(sub.Raw), f)
	if err != nil {
		return nil, err // a *ingest.ParseError: 422 at its row and column
	}
	var lw []wire.Well
	if err := json.Unmarshal(l.Wells, &lw); err != nil {
		return nil, fmt.Errorf("stored layout %s: %w", sub.LayoutID, err)
	}
	out := WellsIn(lw)
	for i := range out {
		pos, err := f.ParseWell(out[i].Well)
		if err != nil {
			return nil, fmt.Errorf("stored layout %s: %w", sub.LayoutID, err)
		}
		out[i].Value, out[i].HasValue = grid[f.Name(pos)]
	}
	return out, nil
}

// sendsConc reports whether any well carries a concentration, which then
// needs its unit.
func sendsConc(wells []ingest.WellIn) bool {
	for _, w := range wells {
		if w.HasConc || w.AntagonistConc != 0 {
			return true
		}
	}
	return false
}

// WellsIn turns wells as JSON sends them into wells as read.
func WellsIn(ws []wire.Well) []ingest.WellIn {
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

// prefixPointer puts a fit settings error under a prefix (e.g. /fit).
func prefixPointer(err error, prefix string) error {
	fields := FieldsOf(err)
	for i := range fields {
		fields[i].Pointer = prefix + fields[i].Pointer
	}
	return &Error{Kind: ErrInvalid, Detail: err.Error(), Fields: fields}
}
