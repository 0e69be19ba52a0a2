package db

import (
	"context"
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

// PlateCurve is one fitted curve of a plate.
type PlateCurve struct {
	Key            string
	CompoundID     string
	AntagonistID   string
	AntagonistConc float64
	Status         string
	LogEC50        *float64
	Result         []byte // the result object, JSON
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

// insertPlate stores the plate row and its wells.
func (w *sqlWriter) InsertPlate(ctx context.Context, p *Plate, wells []WellRow) error {
	var measured any
	if p.MeasuredAt != nil {
		measured = w.e.timeArg(*p.MeasuredAt)
	}
	err := w.q.exec(ctx, "INSERT INTO plates ("+plateCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, $17)",
		p.ID, w.e.timeArg(p.CreatedAt), p.SubmittedBy, nullString(p.AssayID), p.Barcode, p.Format, measured, p.ConcUnit, p.Mode,
		string(p.Settings), p.InputSHA256, p.JobID, p.Status, nil, p.CurvesTotal, p.CurvesDone, p.Error)
	if err != nil {
		return w.e.translate(err)
	}
	if cw, ok := w.q.(copier); ok {
		return w.e.translate(cw.copyWells(ctx, p.ID, wells))
	}
	rows := make([][]any, len(wells))
	for i, wr := range wells {
		rows[i] = []any{p.ID, wr.Well, wr.Row, wr.Col, wr.Role, wr.CompoundID, wr.Conc, wr.Value, wr.AntagonistID, wr.AntagonistConc}
	}
	const q = "INSERT INTO wells (plate_id, well, row_index, col_index, role, compound_id, conc, value, antagonist_id, antagonist_conc) " +
		"VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10)"
	if m, ok := w.q.(manyExecer); ok {
		return w.e.translate(m.execMany(ctx, q, rows))
	}
	for _, r := range rows {
		if err := w.q.exec(ctx, q, r...); err != nil {
			return w.e.translate(err)
		}
	}
	return nil
}

// manyExecer runs one prepared statement for many rows (SQLite: parsing
// one huge multi-row INSERT costs more than the inserts).
type manyExecer interface {
	execMany(ctx context.Context, q string, rows [][]any) error
}

// copier is a querier that can bulk-load wells (PostgreSQL COPY).
type copier interface {
	copyWells(ctx context.Context, plateID string, wells []WellRow) error
}

func (w *sqlWriter) FinishPlate(ctx context.Context, plateID, status string, qc []byte, curves []PlateCurve, errText string) error {
	for _, c := range curves {
		// A retried job writes the same curves again: keep the first.
		err := w.q.exec(ctx, "INSERT INTO plate_curves (plate_id, key, compound_id, antagonist_id, antagonist_conc, status, log_ec50, result) "+
			"VALUES ($1, $2, $3, $4, $5, $6, $7, $8) ON CONFLICT (plate_id, key) DO NOTHING",
			plateID, c.Key, c.CompoundID, c.AntagonistID, c.AntagonistConc, c.Status, c.LogEC50, string(c.Result))
		if err != nil {
			return w.e.translate(err)
		}
	}
	var q any
	if qc != nil {
		q = string(qc)
	}
	return w.e.translate(w.q.exec(ctx, "UPDATE plates SET status = $2, qc = $3, curves_done = curves_total, error = $4 WHERE id = $1",
		plateID, status, q, errText))
}

func (s *sqlStore) SetPlateProgress(ctx context.Context, plateID, status string, done, total int) error {
	return s.e.translate(s.e.exec(ctx, "UPDATE plates SET status = $2, curves_done = $3, curves_total = $4 WHERE id = $1 AND status <> 'done'",
		plateID, status, done, total))
}

func (s *sqlStore) Plate(ctx context.Context, id string) (*Plate, error) {
	var p Plate
	var created dbTime
	var measured *dbTime
	var assay *string
	var qc *string
	var job *int64
	err := s.e.queryRow(ctx, "SELECT "+plateCols+" FROM plates WHERE id = $1", id).Scan(&p.ID, &created, &p.SubmittedBy, &assay,
		&p.Barcode, &p.Format, &measured, &p.ConcUnit, &p.Mode, &p.Settings, &p.InputSHA256, &job, &p.Status, &qc,
		&p.CurvesTotal, &p.CurvesDone, &p.Error)
	if err != nil {
		return nil, s.e.translate(err)
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
	return &p, nil
}

func (s *sqlStore) PlateByJob(ctx context.Context, jobID int64) (*Plate, error) {
	var id string
	if err := s.e.queryRow(ctx, "SELECT id FROM plates WHERE job_id = $1", jobID).Scan(&id); err != nil {
		return nil, s.e.translate(err)
	}
	return s.Plate(ctx, id)
}

func (s *sqlStore) Wells(ctx context.Context, plateID string) ([]WellRow, error) {
	rows, err := s.e.query(ctx, "SELECT well, row_index, col_index, role, compound_id, conc, value, antagonist_id, antagonist_conc "+
		"FROM wells WHERE plate_id = $1 ORDER BY row_index, col_index", plateID)
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	var out []WellRow
	for rows.Next() {
		var w WellRow
		if err := rows.Scan(&w.Well, &w.Row, &w.Col, &w.Role, &w.CompoundID, &w.Conc, &w.Value, &w.AntagonistID, &w.AntagonistConc); err != nil {
			return nil, s.e.translate(err)
		}
		out = append(out, w)
	}
	return out, s.e.translate(rows.Err())
}

func (s *sqlStore) PlateCurves(ctx context.Context, plateID string) ([]PlateCurve, error) {
	rows, err := s.e.query(ctx, "SELECT key, compound_id, antagonist_id, antagonist_conc, status, log_ec50, result "+
		"FROM plate_curves WHERE plate_id = $1 ORDER BY key", plateID)
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	var out []PlateCurve
	for rows.Next() {
		var c PlateCurve
		if err := rows.Scan(&c.Key, &c.CompoundID, &c.AntagonistID, &c.AntagonistConc, &c.Status, &c.LogEC50, &c.Result); err != nil {
			return nil, s.e.translate(err)
		}
		out = append(out, c)
	}
	return out, s.e.translate(rows.Err())
}

func (w *sqlWriter) InsertLayout(ctx context.Context, l *Layout) error {
	return w.e.translate(w.q.exec(ctx, "INSERT INTO layouts (id, name, format, wells, created_at, created_by) VALUES ($1, $2, $3, $4, $5, $6)",
		l.ID, l.Name, l.Format, string(l.Wells), w.e.timeArg(l.CreatedAt), l.CreatedBy))
}

func (s *sqlStore) Layout(ctx context.Context, id string) (*Layout, error) {
	var l Layout
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT id, name, format, wells, created_at, created_by FROM layouts WHERE id = $1", id).
		Scan(&l.ID, &l.Name, &l.Format, &l.Wells, &t, &l.CreatedBy)
	if err != nil {
		return nil, s.e.translate(err)
	}
	l.CreatedAt = t.t
	return &l, nil
}
