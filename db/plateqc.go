package db

import (
	"context"
	"encoding/json"
	"math"
	"strconv"
	"time"
)

// PlateQC is a plate's QC figures, stored as columns of the plate so that
// control charts over an assay's plates are one query. A figure that is
// undefined is NaN (stored as NULL).
type PlateQC struct {
	ZPrime       float64 // Z′ (Zhang, Chung & Oldenburg 1999)
	SignalWindow float64
	// SignalToBackground is mean(max)/mean(min). +Inf when the min
	// controls average 0 (normal for background-subtracted data): stored
	// as NULL with sb_unbounded true, and read back as +Inf.
	SignalToBackground float64
	MaxMean, MaxCV     float64
	MinMean, MinCV     float64
	Pass               bool
	Reasons            []string
	// ReferencePEC50 is the pEC50 of the assay's reference compound on
	// the plate (assay drift's reference_pec50); nil (NULL) for none, so
	// the zero PlateQC claims no reference.
	ReferencePEC50 *float64
}

// nullNaN binds NaN (and, for columns that cannot hold them, ±Inf) as NULL.
func nullNaN(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func nanNull(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

// SetPlateQC stores a plate's QC figures in its columns (in the same
// write as FinishPlate, typically).
func (w *sqlWriter) SetPlateQC(ctx context.Context, plateID string, qc *PlateQC) error {
	const op = "SetPlateQC"
	reasons := qc.Reasons
	if reasons == nil {
		reasons = []string{}
	}
	rj, err := json.Marshal(reasons)
	if err != nil {
		return w.invalid(op, plateID, "reasons")
	}
	sb := nullNaN(qc.SignalToBackground)
	unbounded := math.IsInf(qc.SignalToBackground, 1)
	n, err := w.exec(ctx, op, plateID, "UPDATE plates SET z_prime = $2, signal_window = $3, signal_to_background = $4, "+
		"sb_unbounded = $5, max_mean = $6, max_cv = $7, min_mean = $8, min_cv = $9, qc_pass = $10, qc_reasons = $11, reference_pec50 = $12 WHERE id = $1",
		plateID, nullNaN(qc.ZPrime), nullNaN(qc.SignalWindow), sb, unbounded, nullNaN(qc.MaxMean), nullNaN(qc.MaxCV),
		nullNaN(qc.MinMean), nullNaN(qc.MinCV), qc.Pass, string(rj), qc.ReferencePEC50)
	if err != nil {
		return err
	}
	if n == 0 {
		return w.abort(&Error{Op: op, Key: plateID, Err: ErrNotFound})
	}
	return nil
}

const plateQCCols = "z_prime, signal_window, signal_to_background, sb_unbounded, max_mean, max_cv, min_mean, min_cv, qc_pass, qc_reasons"

// qcScan receives plateQCCols.
type qcScan struct {
	z, sw, sb, maxMean, maxCV, minMean, minCV *float64
	unbounded                                 bool
	pass                                      *bool
	reasons                                   []byte
}

func (q *qcScan) dest() []any {
	return []any{&q.z, &q.sw, &q.sb, &q.unbounded, &q.maxMean, &q.maxCV, &q.minMean, &q.minCV, &q.pass, &q.reasons}
}

// figures returns the scanned figures, nil when the plate was never
// assessed (qc_pass NULL).
func (q *qcScan) figures() (*PlateQC, error) {
	if q.pass == nil {
		return nil, nil
	}
	f := &PlateQC{ZPrime: nanNull(q.z), SignalWindow: nanNull(q.sw), SignalToBackground: nanNull(q.sb),
		MaxMean: nanNull(q.maxMean), MaxCV: nanNull(q.maxCV), MinMean: nanNull(q.minMean), MinCV: nanNull(q.minCV), Pass: *q.pass}
	if q.sb == nil && q.unbounded {
		f.SignalToBackground = math.Inf(1)
	}
	if len(q.reasons) > 0 {
		if err := json.Unmarshal(q.reasons, &f.Reasons); err != nil {
			return nil, err
		}
	}
	return f, nil
}

// QC metrics that PlateQCSeries can chart, by column.
var qcMetrics = map[string]bool{
	"z_prime": true, "signal_window": true, "signal_to_background": true,
	"max_mean": true, "max_cv": true, "min_mean": true, "min_cv": true,
}

// QCPoint is one plate's value of a QC metric.
type QCPoint struct {
	PlateID    string
	Barcode    string
	MeasuredAt time.Time // the plate's measured_at, or its created_at when it has none
	// Value is NaN when undefined, +Inf for an unbounded S/B.
	Value float64
	Pass  bool
}

// PlateQCSeries returns one QC metric (a column of PlateQC: z_prime,
// signal_window, signal_to_background, max_mean, max_cv, min_mean,
// min_cv) over an assay's assessed plates with measured_at in [from, to)
// (zero does not bound), oldest first.
func (s *sqlStore) PlateQCSeries(ctx context.Context, assayID, metric string, from, to time.Time) ([]QCPoint, error) {
	const op = "PlateQCSeries"
	if !qcMetrics[metric] {
		return nil, &Error{Op: op, Key: assayID, Field: "metric", Err: ErrInvalid}
	}
	// The expression is the one of the index plates_assay_measured.
	const at = "COALESCE(measured_at, created_at)"
	args := []any{assayID}
	q := "SELECT id, barcode, " + at + ", " + metric + ", sb_unbounded, qc_pass FROM plates WHERE assay_id = $1 AND qc_pass IS NOT NULL"
	if !from.IsZero() {
		args = append(args, s.e.timeArg(from))
		q += " AND " + at + " >= $" + strconv.Itoa(len(args))
	}
	if !to.IsZero() {
		args = append(args, s.e.timeArg(to))
		q += " AND " + at + " < $" + strconv.Itoa(len(args))
	}
	q += " ORDER BY " + at + ", id"
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, s.read(op, assayID, err)
	}
	defer rows.Close()
	var out []QCPoint
	for rows.Next() {
		var p QCPoint
		var t dbTime
		var v *float64
		var unbounded bool
		if err := rows.Scan(&p.PlateID, &p.Barcode, &t, &v, &unbounded, &p.Pass); err != nil {
			return nil, s.read(op, assayID, err)
		}
		p.MeasuredAt, p.Value = t.t, nanNull(v)
		if v == nil && unbounded && metric == "signal_to_background" {
			p.Value = math.Inf(1)
		}
		out = append(out, p)
	}
	return out, s.read(op, assayID, rows.Err())
}
