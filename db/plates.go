package db

import (
	"context"
	"strconv"
	"strings"
	"time"
)

// Plate is a submitted plate and the state of its fit job.
type Plate struct {
	ID          string
	CreatedAt   time.Time
	SubmittedBy string
	AssayID     string
	Barcode     string
	Format      int
	MeasuredAt  *time.Time
	ConcUnit    string
	Mode        string
	Settings    []byte // JSON
	InputSHA256 string
	JobID       int64
	Status      string // queued, running, done, failed
	QC          []byte // JSON, nil until assessed
	// Figures are the QC figures as stored in columns (SetPlateQC); nil
	// until assessed.
	Figures     *PlateQC
	CurvesTotal int
	CurvesDone  int
	Error       string
}

// Plate statuses.
const (
	PlateQueued  = "queued"
	PlateRunning = "running"
	PlateDone    = "done"
	PlateFailed  = "failed"
)

// WellRow is a stored well; concentrations are molar.
type WellRow struct {
	Well           string
	Row, Col       int
	Role           string
	CompoundID     string
	Conc           float64
	Value          *float64
	AntagonistID   string
	AntagonistConc float64
}

// PlateCurve is one fitted curve of a plate: a curve result of kind
// KindPlateCurve, whose assay, experiment time, submitter, settings and
// input hash are its plate's.
type PlateCurve struct {
	// ID is the curve result's ID; "" makes FinishPlate use
	// "<plate ID>:<key>", so that a retried job makes the same.
	ID             string
	Key            string
	CompoundID     string
	AntagonistID   string
	AntagonistConc float64
	Model          string
	Status         string
	LogEC50        *float64 // set for a usable (converged) fit only
	Result         []byte   // the result object, JSON
	EngineVersion  string
	Params         []FitParam
	// BootDraws as in CurveResult: B × BootCols, row by row.
	BootCols  int
	BootDraws []float64
	// CreatedAt is when the curve was stored; zero means the time of
	// FinishPlate.
	CreatedAt time.Time
}

// Layout is a saved plate map, reused across plates.
type Layout struct {
	ID        string
	Name      string
	Format    int
	Wells     []byte // JSON
	CreatedAt time.Time
	CreatedBy string
}

const plateCols = "id, created_at, submitted_by, assay_id, barcode, format, measured_at, conc_unit, mode, settings, " +
	"input_sha256, job_id, status, qc, curves_total, curves_done, error"

// InsertPlate stores the plate row and its wells: COPY on PostgreSQL, one
// prepared statement on SQLite.
func (w *sqlWriter) InsertPlate(ctx context.Context, p *Plate, wells []WellRow) error {
	const op = "InsertPlate"
	var measured any
	if p.MeasuredAt != nil {
		measured = w.e.timeArg(*p.MeasuredAt)
	}
	settings, ok := jsonDoc(p.Settings, "")
	if !ok || settings == nil {
		return w.invalid(op, p.ID, "settings")
	}
	err := w.insert(ctx, op, p.ID, "INSERT INTO plates ("+plateCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, $17)",
		p.ID, w.e.timeArg(p.CreatedAt), p.SubmittedBy, nullString(p.AssayID), p.Barcode, p.Format, measured, p.ConcUnit, p.Mode,
		settings, p.InputSHA256, p.JobID, p.Status, nil, p.CurvesTotal, p.CurvesDone, p.Error)
	if err != nil {
		return err
	}
	rows := make([][]any, len(wells))
	for i, wr := range wells {
		rows[i] = []any{p.ID, wr.Well, wr.Row, wr.Col, wr.Role, wr.CompoundID, wr.Conc, wr.Value, wr.AntagonistID, wr.AntagonistConc}
		if checkArgs(rows[i]) != nil {
			return w.invalid(op, p.ID, "wells/"+wr.Well)
		}
	}
	if c, ok := w.q.(bulkCopier); ok {
		if err := c.copyRows(ctx, "wells", strings.Split(wellCols, ", "), rows); err != nil {
			return w.abort(opError(op, p.ID, err, w.e.classify))
		}
		return nil
	}
	const q = "INSERT INTO wells (" + wellCols + ") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)"
	return w.execMany(ctx, op, p.ID, q, rows)
}

// execMany runs one statement for many rows in one go: a pipelined batch
// on PostgreSQL, one prepared statement on SQLite (parsing one huge
// multi-row INSERT costs more than the inserts).
func (w *sqlWriter) execMany(ctx context.Context, op, key, q string, rows [][]any) error {
	if w.err != nil {
		return w.err
	}
	for _, r := range rows {
		if checkArgs(r) != nil {
			return w.invalid(op, key, "")
		}
	}
	m, ok := w.q.(manyExecer)
	if !ok {
		for _, r := range rows {
			if _, err := w.exec(ctx, op, key, q, r...); err != nil {
				return err
			}
		}
		return nil
	}
	if err := m.execMany(ctx, q, rows); err != nil {
		return w.abort(opError(op, key, err, w.e.classify))
	}
	return nil
}

// manyExecer runs one statement for many rows.
type manyExecer interface {
	execMany(ctx context.Context, q string, rows [][]any) error
}

// FinishPlate stores the plate's curves as curve results (their assay,
// measured_at, submitter, settings and input hash are the plate's), keeping
// any stored by an earlier attempt, then its status, QC document and error.
func (w *sqlWriter) FinishPlate(ctx context.Context, plateID, status string, qc []byte, curves []PlateCurve, errText string) error {
	const op = "FinishPlate"
	qcDoc, ok := jsonDoc(qc, "")
	if !ok {
		return w.invalid(op, plateID, "qc")
	}
	if w.err != nil {
		return w.err
	}
	var p CurveResult
	var created dbTime
	var measured *dbTime
	var assay *string
	err := w.q.queryRow(ctx, "SELECT assay_id, created_at, measured_at, submitted_by, settings, input_sha256 FROM plates WHERE id = $1", plateID).
		Scan(&assay, &created, &measured, &p.SubmittedBy, &p.Settings, &p.InputSHA256)
	if err != nil {
		return w.abort(opError(op, plateID, err, w.e.classify))
	}
	p.AssayID, p.MeasuredAt = deref(assay), created.t
	if measured != nil && !measured.t.IsZero() {
		p.MeasuredAt = measured.t
	}
	now := time.Now().UTC()
	rows := make([][]any, len(curves))
	for i, c := range curves {
		r := p
		r.ID, r.Kind, r.PlateID, r.CurveKey = c.ID, KindPlateCurve, plateID, c.Key
		if r.ID == "" {
			r.ID = plateID + ":" + c.Key
		}
		r.CompoundID, r.AntagonistID, r.AntagonistConc = c.CompoundID, c.AntagonistID, c.AntagonistConc
		r.CreatedAt = c.CreatedAt
		if r.CreatedAt.IsZero() {
			r.CreatedAt = now
		}
		r.Model, r.Status, r.Result, r.EngineVersion, r.Params = c.Model, c.Status, c.Result, c.EngineVersion, c.Params
		r.BootCols, r.BootDraws = c.BootCols, c.BootDraws
		r.LogEC50, r.Hill, r.Top, r.Bottom = estimateOf(c.Params, "log_ec50"), estimateOf(c.Params, "hill"),
			estimateOf(c.Params, "top"), estimateOf(c.Params, "bottom")
		r.LogEC50.Value = c.LogEC50
		args, field := w.resultArgs(&r)
		if field != "" {
			return w.invalid(op, plateID, "curves/"+c.Key+"/"+field)
		}
		rows[i] = args
	}
	// A retried job writes the same curves again: keep the first.
	if err := w.execMany(ctx, op, plateID, resultInsert+" ON CONFLICT DO NOTHING", rows); err != nil {
		return err
	}
	n, err := w.exec(ctx, op, plateID, "UPDATE plates SET status = $2, qc = $3, curves_done = curves_total, error = $4 WHERE id = $1",
		plateID, status, qcDoc, errText)
	if err != nil {
		return err
	}
	if n == 0 {
		return w.abort(&Error{Op: op, Key: plateID, Err: ErrNotFound})
	}
	return nil
}

func (s *sqlStore) SetPlateProgress(ctx context.Context, plateID, status string, done, total int) error {
	_, err := s.e.exec(ctx, "UPDATE plates SET status = $2, curves_done = $3, curves_total = $4 WHERE id = $1 AND status <> 'done'",
		plateID, status, done, total)
	return s.read("SetPlateProgress", plateID, err)
}

func (s *sqlStore) Plate(ctx context.Context, id string) (*Plate, error) {
	var p Plate
	var created dbTime
	var measured *dbTime
	var assay *string
	var qc *string
	var job *int64
	var figs qcScan
	dest := append([]any{&p.ID, &created, &p.SubmittedBy, &assay, &p.Barcode, &p.Format, &measured, &p.ConcUnit, &p.Mode,
		&p.Settings, &p.InputSHA256, &job, &p.Status, &qc, &p.CurvesTotal, &p.CurvesDone, &p.Error}, figs.dest()...)
	err := s.e.queryRow(ctx, "SELECT "+plateCols+", "+plateQCCols+" FROM plates WHERE id = $1", id).Scan(dest...)
	if err != nil {
		return nil, s.read("Plate", id, err)
	}
	p.CreatedAt, p.AssayID = created.t, deref(assay)
	if measured != nil && !measured.t.IsZero() {
		t := measured.t
		p.MeasuredAt = &t
	}
	if qc != nil {
		p.QC = []byte(*qc)
	}
	if job != nil {
		p.JobID = *job
	}
	if p.Figures, err = figs.figures(); err != nil {
		return nil, s.read("Plate", id, err)
	}
	return &p, nil
}

func (s *sqlStore) PlateByJob(ctx context.Context, jobID int64) (*Plate, error) {
	var id string
	if err := s.e.queryRow(ctx, "SELECT id FROM plates WHERE job_id = $1", jobID).Scan(&id); err != nil {
		return nil, s.read("PlateByJob", strconv.FormatInt(jobID, 10), err)
	}
	return s.Plate(ctx, id)
}

func (s *sqlStore) Wells(ctx context.Context, plateID string) ([]WellRow, error) {
	rows, err := s.e.query(ctx, "SELECT well, row_index, col_index, role, compound_id, conc, value, antagonist_id, antagonist_conc "+
		"FROM wells WHERE plate_id = $1 ORDER BY row_index, col_index", plateID)
	if err != nil {
		return nil, s.read("Wells", plateID, err)
	}
	defer rows.Close()
	var out []WellRow
	for rows.Next() {
		var w WellRow
		if err := rows.Scan(&w.Well, &w.Row, &w.Col, &w.Role, &w.CompoundID, &w.Conc, &w.Value, &w.AntagonistID, &w.AntagonistConc); err != nil {
			return nil, s.read("Wells", plateID, err)
		}
		out = append(out, w)
	}
	return out, s.read("Wells", plateID, rows.Err())
}

func (s *sqlStore) PlateCurves(ctx context.Context, plateID string) ([]PlateCurve, error) {
	cs, err := s.results(ctx, "PlateCurves", plateID,
		"SELECT "+resultCols+" FROM curve_results WHERE plate_id = $1 ORDER BY curve_key", plateID)
	if err != nil {
		return nil, err
	}
	out := make([]PlateCurve, len(cs))
	for i, c := range cs {
		out[i] = PlateCurve{ID: c.ID, Key: c.CurveKey, CompoundID: c.CompoundID, AntagonistID: c.AntagonistID,
			AntagonistConc: c.AntagonistConc, Model: c.Model, Status: c.Status, LogEC50: c.LogEC50.Value, Result: c.Result,
			EngineVersion: c.EngineVersion, Params: c.Params, BootCols: c.BootCols, BootDraws: c.BootDraws, CreatedAt: c.CreatedAt}
	}
	return out, nil
}

func (w *sqlWriter) InsertLayout(ctx context.Context, l *Layout) error {
	wells, ok := jsonDoc(l.Wells, "")
	if !ok || wells == nil {
		return w.invalid("InsertLayout", l.ID, "wells")
	}
	return w.insert(ctx, "InsertLayout", l.ID, "INSERT INTO layouts (id, name, format, wells, created_at, created_by) VALUES ($1, $2, $3, $4, $5, $6)",
		l.ID, l.Name, l.Format, wells, w.e.timeArg(l.CreatedAt), l.CreatedBy)
}

func (s *sqlStore) Layout(ctx context.Context, id string) (*Layout, error) {
	var l Layout
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT id, name, format, wells, created_at, created_by FROM layouts WHERE id = $1", id).
		Scan(&l.ID, &l.Name, &l.Format, &l.Wells, &t, &l.CreatedBy)
	if err != nil {
		return nil, s.read("Layout", id, err)
	}
	l.CreatedAt = t.t
	return &l, nil
}

// Layouts lists every layout by ID, without its wells.
func (s *sqlStore) Layouts(ctx context.Context) ([]Layout, error) {
	rows, err := s.e.query(ctx, "SELECT id, name, format, created_at, created_by FROM layouts ORDER BY id")
	if err != nil {
		return nil, s.read("Layouts", "", err)
	}
	defer rows.Close()
	var out []Layout
	for rows.Next() {
		var l Layout
		var t dbTime
		if err := rows.Scan(&l.ID, &l.Name, &l.Format, &t, &l.CreatedBy); err != nil {
			return nil, s.read("Layouts", "", err)
		}
		l.CreatedAt = t.t
		out = append(out, l)
	}
	return out, s.read("Layouts", "", rows.Err())
}
