package db

import (
	"context"
	"encoding/binary"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"time"
)

// Kinds of curve result.
const (
	KindFit        = "fit"         // a single fit, POST /v1/fits
	KindPlateCurve = "plate_curve" // one curve of a plate's job
)

// CurveResult is one row of the results table: a single fit or a plate
// curve, with the main estimates as columns for queries across runs and
// the documents beside them. It is immutable once stored.
type CurveResult struct {
	ID             string
	Kind           string // KindFit or KindPlateCurve
	PlateID        string // "" for a fit
	CurveKey       string // the curve's key within its plate; "" for a fit
	AssayID        string // "" for none
	CompoundID     string // "" for none
	AntagonistID   string
	AntagonistConc float64 // molar
	// MeasuredAt is the experiment's time: the plate's measured_at (its
	// created_at when it has none), or a fit's upload time.
	MeasuredAt  time.Time
	CreatedAt   time.Time
	SubmittedBy string
	RefitOf     string // "" for none
	Model       string
	Status      string
	// The main estimates. LogEC50.Value is set only for a usable
	// (converged) fit; the others whenever the model has the parameter.
	LogEC50, Hill, Top, Bottom Estimate
	EngineVersion              string
	InputSHA256                string
	Settings                   []byte // JSON
	Input                      []byte // JSON; nil for a plate curve (its input is the wells)
	Result                     []byte // JSON, byte for byte as returned
	Labels                     []byte // a JSON object
	Params                     []FitParam
	// BootDraws holds the bootstrap parameter vectors row by row, B ×
	// BootCols; nil when the curve was not bootstrapped.
	BootCols  int
	BootDraws []float64
}

// Estimate is one estimate with its interval: the bootstrap interval when
// the curve was bootstrapped, else the Wald interval. nil: not estimated.
type Estimate struct {
	Value, Lo, Hi *float64
}

// estimateOf picks the named parameter's estimate and interval.
func estimateOf(ps []FitParam, name string) Estimate {
	for _, p := range ps {
		if p.Name != name {
			continue
		}
		if p.BootLo != nil || p.BootHi != nil {
			return Estimate{p.Estimate, p.BootLo, p.BootHi}
		}
		return Estimate{p.Estimate, p.WaldLo, p.WaldHi}
	}
	return Estimate{}
}

// encodeDraws packs draws as little-endian float64, 8 bytes each.
func encodeDraws(draws []float64) []byte {
	if draws == nil {
		return nil
	}
	b := make([]byte, 8*len(draws))
	for i, v := range draws {
		binary.LittleEndian.PutUint64(b[8*i:], math.Float64bits(v))
	}
	return b
}

func decodeDraws(b []byte) []float64 {
	if b == nil {
		return nil
	}
	out := make([]float64, len(b)/8)
	for i := range out {
		out[i] = math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
	}
	return out
}

const resultCols = "id, kind, plate_id, curve_key, assay_id, compound_id, antagonist_id, antagonist_conc, measured_at, created_at, " +
	"submitted_by, refit_of, model, status, log_ec50, log_ec50_lo, log_ec50_hi, hill, hill_lo, hill_hi, top, top_lo, top_hi, " +
	"bottom, bottom_lo, bottom_hi, engine_version, input_sha256, settings, input, result, labels, params, boot_cols, boot_draws"

// resultInsert is the INSERT of one curve result (35 columns).
var resultInsert = func() string {
	var b strings.Builder
	b.WriteString("INSERT INTO curve_results (" + resultCols + ") VALUES (")
	for i := 1; i <= 35; i++ {
		if i > 1 {
			b.WriteString(", ")
		}
		b.WriteString("$" + strconv.Itoa(i))
	}
	b.WriteString(")")
	return b.String()
}()

// resultArgs checks r's documents and returns the INSERT's arguments, or
// the field at fault.
func (w *sqlWriter) resultArgs(r *CurveResult) ([]any, string) {
	settings, ok := jsonDoc(r.Settings, "")
	if !ok || settings == nil {
		return nil, "settings"
	}
	input, ok := jsonDoc(r.Input, "")
	if !ok || (input == nil && r.Kind == KindFit) {
		return nil, "input"
	}
	result, ok := jsonDoc(r.Result, "")
	if !ok || result == nil {
		return nil, "result"
	}
	labels, ok := jsonDoc(r.Labels, "{}")
	if !ok {
		return nil, "labels"
	}
	params := []FitParam{}
	if r.Params != nil {
		params = r.Params
	}
	pj, err := json.Marshal(params)
	if err != nil {
		return nil, "params"
	}
	if r.BootCols < 0 || (r.BootCols == 0) != (len(r.BootDraws) == 0) || (r.BootCols > 0 && len(r.BootDraws)%r.BootCols != 0) {
		return nil, "boot_draws"
	}
	measured := r.MeasuredAt
	if measured.IsZero() {
		measured = r.CreatedAt
	}
	var plate any
	if r.PlateID != "" {
		plate = r.PlateID
	}
	return []any{r.ID, r.Kind, plate, r.CurveKey, nullString(r.AssayID), nullString(r.CompoundID), r.AntagonistID, r.AntagonistConc,
		w.e.timeArg(measured), w.e.timeArg(r.CreatedAt), r.SubmittedBy, nullString(r.RefitOf), r.Model, r.Status,
		r.LogEC50.Value, r.LogEC50.Lo, r.LogEC50.Hi, r.Hill.Value, r.Hill.Lo, r.Hill.Hi, r.Top.Value, r.Top.Lo, r.Top.Hi,
		r.Bottom.Value, r.Bottom.Lo, r.Bottom.Hi, r.EngineVersion, r.InputSHA256, settings, input, result, labels, string(pj),
		r.BootCols, encodeDraws(r.BootDraws)}, ""
}

// scanResult reads one row of resultCols.
func scanResult(row rowScanner) (*CurveResult, error) {
	var r CurveResult
	var measured, created dbTime
	var plate, assay, compound, refit *string
	var params, draws []byte
	err := row.Scan(&r.ID, &r.Kind, &plate, &r.CurveKey, &assay, &compound, &r.AntagonistID, &r.AntagonistConc, &measured, &created,
		&r.SubmittedBy, &refit, &r.Model, &r.Status, &r.LogEC50.Value, &r.LogEC50.Lo, &r.LogEC50.Hi, &r.Hill.Value, &r.Hill.Lo, &r.Hill.Hi,
		&r.Top.Value, &r.Top.Lo, &r.Top.Hi, &r.Bottom.Value, &r.Bottom.Lo, &r.Bottom.Hi, &r.EngineVersion, &r.InputSHA256,
		&r.Settings, &r.Input, &r.Result, &r.Labels, &params, &r.BootCols, &draws)
	if err != nil {
		return nil, err
	}
	r.MeasuredAt, r.CreatedAt = measured.t, created.t
	r.PlateID, r.AssayID, r.CompoundID, r.RefitOf = deref(plate), deref(assay), deref(compound), deref(refit)
	if err := json.Unmarshal(params, &r.Params); err != nil {
		return nil, err
	}
	if len(r.Params) == 0 {
		r.Params = nil
	}
	r.BootDraws = decodeDraws(draws)
	return &r, nil
}

// CurveResult returns one stored curve result of either kind.
func (s *sqlStore) CurveResult(ctx context.Context, id string) (*CurveResult, error) {
	r, err := scanResult(s.e.queryRow(ctx, "SELECT "+resultCols+" FROM curve_results WHERE id = $1", id))
	if err != nil {
		return nil, s.read("CurveResult", id, err)
	}
	return r, nil
}

// CurveFilter selects a compound's curve results for CompoundCurves.
type CurveFilter struct {
	CompoundID string    // required
	AssayID    string    // "" for every assay
	From, To   time.Time // measured_at in [From, To); zero does not bound
	// Limit is 1–MaxCurveLimit; zero means MaxCurveLimit.
	Limit int
}

// MaxCurveLimit bounds the rows of one CompoundCurves call.
const MaxCurveLimit = 10000

// CompoundCurves returns every curve result of a compound, single fits and
// plate curves alike, oldest experiment first (measured_at, then id).
func (s *sqlStore) CompoundCurves(ctx context.Context, f CurveFilter) ([]CurveResult, error) {
	const op = "CompoundCurves"
	limit := f.Limit
	if limit == 0 {
		limit = MaxCurveLimit
	}
	if limit < 0 || limit > MaxCurveLimit {
		return nil, &Error{Op: op, Key: f.CompoundID, Field: "limit", Err: ErrInvalid}
	}
	args := []any{f.CompoundID}
	q := "SELECT " + resultCols + " FROM curve_results WHERE compound_id = $1"
	if f.AssayID != "" {
		args = append(args, f.AssayID)
		q += " AND assay_id = $" + strconv.Itoa(len(args))
	}
	if !f.From.IsZero() {
		args = append(args, s.e.timeArg(f.From))
		q += " AND measured_at >= $" + strconv.Itoa(len(args))
	}
	if !f.To.IsZero() {
		args = append(args, s.e.timeArg(f.To))
		q += " AND measured_at < $" + strconv.Itoa(len(args))
	}
	args = append(args, limit)
	q += " ORDER BY measured_at, id LIMIT $" + strconv.Itoa(len(args))
	return s.results(ctx, op, f.CompoundID, q, args...)
}

// results runs a query of resultCols.
func (s *sqlStore) results(ctx context.Context, op, key, q string, args ...any) ([]CurveResult, error) {
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, s.read(op, key, err)
	}
	defer rows.Close()
	var out []CurveResult
	for rows.Next() {
		r, err := scanResult(rows)
		if err != nil {
			return nil, s.read(op, key, err)
		}
		out = append(out, *r)
	}
	return out, s.read(op, key, rows.Err())
}
