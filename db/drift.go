package db

import (
	"context"
	"encoding/json"
	"strconv"
	"time"
)

// DriftPlate is one assessed plate of an assay with every figure that
// assay drift charts (NaN where undefined: no reference compound, a CV of
// one well, …).
type DriftPlate struct {
	PlateID              string
	Barcode              string
	MeasuredAt           time.Time // the plate's measured_at, or its created_at when it has none
	Pass                 bool      // the plate passed its QC thresholds
	ZPrime, SignalWindow float64
	MaxMean, MaxCV       float64
	MinMean, MinCV       float64
	// ReferencePEC50 is the pEC50 of the assay's reference compound on
	// the plate.
	ReferencePEC50 float64
}

// The sources of a drift baseline.
const (
	BaselineExplicit = "explicit"     // mean and SD given by an admin
	BaselinePlates   = "plates"       // estimated from listed plates
	BaselineAuto     = "auto"         // estimated from the assay's first accepted plates
	BaselineStandard = "standardised" // the r4s chart: control z values against 0 ± 1
)

// DriftChart is the stored state of one (assay, metric) chart: its
// baseline and its status after the latest evaluation.
type DriftChart struct {
	AssayID string
	Metric  string
	// Source is BaselineExplicit, BaselinePlates or BaselineAuto.
	Source string
	// Mean and SD are the baseline; NaN while an auto baseline lacks
	// plates.
	Mean, SD float64
	// Runs is the number of accepted plates an auto baseline uses (0 for
	// the default).
	Runs int
	// Plates are the plates a "plates" baseline was estimated from.
	Plates []string
	// Status is "in_control", "warning", "out_of_control" or
	// "no_baseline".
	Status    string
	UpdatedAt time.Time
	UpdatedBy string
	// Latest is the chart's latest recorded violation (by experiment
	// time), filled by DriftCharts; nil when none.
	Latest *DriftViolation
}

// DriftViolation is one recorded rule violation, with the baseline it was
// judged against.
type DriftViolation struct {
	AssayID, Metric, PlateID, Rule string
	MeasuredAt                     time.Time
	Value, Z                       float64
	BaselineMean, BaselineSD       float64
	BaselineSource                 string
	RecordedAt                     time.Time
}

const driftPlateCols = "z_prime, signal_window, max_mean, max_cv, min_mean, min_cv, reference_pec50"

// DriftPlates returns an assay's assessed plates, oldest experiment first
// (ties by plate ID), with measured_at in [from, to) (zero does not bound).
func (s *sqlStore) DriftPlates(ctx context.Context, assayID string, from, to time.Time) ([]DriftPlate, error) {
	const op = "DriftPlates"
	// The expression is the one of the index plates_assay_measured.
	const at = "COALESCE(measured_at, created_at)"
	args := []any{assayID}
	q := "SELECT id, barcode, " + at + ", qc_pass, " + driftPlateCols + " FROM plates WHERE assay_id = $1 AND qc_pass IS NOT NULL"
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
	var out []DriftPlate
	for rows.Next() {
		var p DriftPlate
		var t dbTime
		var v [7]*float64
		if err := rows.Scan(&p.PlateID, &p.Barcode, &t, &p.Pass, &v[0], &v[1], &v[2], &v[3], &v[4], &v[5], &v[6]); err != nil {
			return nil, s.read(op, assayID, err)
		}
		p.MeasuredAt = t.t
		p.ZPrime, p.SignalWindow, p.MaxMean, p.MaxCV = nanNull(v[0]), nanNull(v[1]), nanNull(v[2]), nanNull(v[3])
		p.MinMean, p.MinCV, p.ReferencePEC50 = nanNull(v[4]), nanNull(v[5]), nanNull(v[6])
		out = append(out, p)
	}
	return out, s.read(op, assayID, rows.Err())
}

const driftChartCols = "assay_id, metric, source, baseline_mean, baseline_sd, baseline_runs, baseline_plates, status, updated_at, updated_by"

// driftChartScan receives driftChartCols.
type driftChartScan struct {
	c        DriftChart
	mean, sd *float64
	plates   []byte
	at       dbTime
}

func (d *driftChartScan) dest() []any {
	return []any{&d.c.AssayID, &d.c.Metric, &d.c.Source, &d.mean, &d.sd, &d.c.Runs, &d.plates, &d.c.Status, &d.at, &d.c.UpdatedBy}
}

func (d *driftChartScan) chart() (DriftChart, error) {
	c := d.c
	c.Mean, c.SD, c.UpdatedAt = nanNull(d.mean), nanNull(d.sd), d.at.t
	if len(d.plates) > 0 {
		if err := json.Unmarshal(d.plates, &c.Plates); err != nil {
			return c, err
		}
	}
	return c, nil
}

// AssayDriftCharts returns an assay's stored charts by metric.
func (s *sqlStore) AssayDriftCharts(ctx context.Context, assayID string) ([]DriftChart, error) {
	const op = "AssayDriftCharts"
	rows, err := s.e.query(ctx, "SELECT "+driftChartCols+" FROM drift_charts WHERE assay_id = $1 ORDER BY metric", assayID)
	if err != nil {
		return nil, s.read(op, assayID, err)
	}
	defer rows.Close()
	var out []DriftChart
	for rows.Next() {
		var d driftChartScan
		if err := rows.Scan(d.dest()...); err != nil {
			return nil, s.read(op, assayID, err)
		}
		c, err := d.chart()
		if err != nil {
			return nil, s.read(op, assayID, err)
		}
		out = append(out, c)
	}
	return out, s.read(op, assayID, rows.Err())
}

const driftViolationCols = "assay_id, metric, plate_id, rule, measured_at, value, z, baseline_mean, baseline_sd, baseline_source, recorded_at"

// DriftCharts returns every stored chart by assay and metric, each with
// its latest recorded violation: one query, for a wall dashboard.
func (s *sqlStore) DriftCharts(ctx context.Context) ([]DriftChart, error) {
	const op = "DriftCharts"
	// The latest violation of each chart: the last by experiment time
	// (then plate, then rule), found through drift_violations_latest.
	const q = "SELECT c." + "assay_id, c.metric, c.source, c.baseline_mean, c.baseline_sd, c.baseline_runs, c.baseline_plates, c.status, c.updated_at, c.updated_by, " +
		"v.plate_id, v.rule, v.measured_at, v.value, v.z, v.baseline_mean, v.baseline_sd, v.baseline_source, v.recorded_at " +
		"FROM drift_charts c LEFT JOIN (SELECT *, ROW_NUMBER() OVER (PARTITION BY assay_id, metric ORDER BY measured_at DESC, plate_id DESC, rule) AS n " +
		"FROM drift_violations) v ON v.assay_id = c.assay_id AND v.metric = c.metric AND v.n = 1 ORDER BY c.assay_id, c.metric"
	rows, err := s.e.query(ctx, q)
	if err != nil {
		return nil, s.read(op, "", err)
	}
	defer rows.Close()
	var out []DriftChart
	for rows.Next() {
		var d driftChartScan
		var plateID, rule, source *string
		var value, z, mean, sd *float64
		var at, rec dbTime
		dest := append(d.dest(), &plateID, &rule, &at, &value, &z, &mean, &sd, &source, &rec)
		if err := rows.Scan(dest...); err != nil {
			return nil, s.read(op, "", err)
		}
		c, err := d.chart()
		if err != nil {
			return nil, s.read(op, "", err)
		}
		if plateID != nil {
			c.Latest = &DriftViolation{AssayID: c.AssayID, Metric: c.Metric, PlateID: *plateID, Rule: deref(rule), MeasuredAt: at.t,
				Value: nanNull(value), Z: nanNull(z), BaselineMean: nanNull(mean), BaselineSD: nanNull(sd), BaselineSource: deref(source), RecordedAt: rec.t}
		}
		out = append(out, c)
	}
	return out, s.read(op, "", rows.Err())
}

// DriftViolations returns the recorded violations of an assay's metric,
// oldest experiment first.
func (s *sqlStore) DriftViolations(ctx context.Context, assayID, metric string) ([]DriftViolation, error) {
	const op = "DriftViolations"
	rows, err := s.e.query(ctx, "SELECT "+driftViolationCols+" FROM drift_violations WHERE assay_id = $1 AND metric = $2 "+
		"ORDER BY measured_at, plate_id, rule", assayID, metric)
	if err != nil {
		return nil, s.read(op, assayID, err)
	}
	defer rows.Close()
	var out []DriftViolation
	for rows.Next() {
		var v DriftViolation
		var at, rec dbTime
		if err := rows.Scan(&v.AssayID, &v.Metric, &v.PlateID, &v.Rule, &at, &v.Value, &v.Z, &v.BaselineMean, &v.BaselineSD,
			&v.BaselineSource, &rec); err != nil {
			return nil, s.read(op, assayID, err)
		}
		v.MeasuredAt, v.RecordedAt = at.t, rec.t
		out = append(out, v)
	}
	return out, s.read(op, assayID, rows.Err())
}

// UpsertDriftChart stores a chart's baseline and status, replacing the
// stored ones.
func (w *sqlWriter) UpsertDriftChart(ctx context.Context, c *DriftChart) error {
	const op = "UpsertDriftChart"
	key := c.AssayID + "/" + c.Metric
	plates := c.Plates
	if plates == nil {
		plates = []string{}
	}
	pj, err := json.Marshal(plates)
	if err != nil {
		return w.invalid(op, key, "plates")
	}
	_, err = w.exec(ctx, op, key, "INSERT INTO drift_charts ("+driftChartCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10) "+
		"ON CONFLICT (assay_id, metric) DO UPDATE SET source = excluded.source, baseline_mean = excluded.baseline_mean, "+
		"baseline_sd = excluded.baseline_sd, baseline_runs = excluded.baseline_runs, baseline_plates = excluded.baseline_plates, "+
		"status = excluded.status, updated_at = excluded.updated_at, updated_by = excluded.updated_by",
		c.AssayID, c.Metric, c.Source, nullNaN(c.Mean), nullNaN(c.SD), c.Runs, string(pj), c.Status, w.e.timeArg(c.UpdatedAt), c.UpdatedBy)
	return err
}

// InsertDriftViolation records a violation; ErrExists (the write goes on)
// when that plate's rule on that chart is recorded already.
func (w *sqlWriter) InsertDriftViolation(ctx context.Context, v *DriftViolation) error {
	return w.insert(ctx, "InsertDriftViolation", v.AssayID+"/"+v.Metric+"/"+v.PlateID+"/"+v.Rule,
		"INSERT INTO drift_violations ("+driftViolationCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11)",
		v.AssayID, v.Metric, v.PlateID, v.Rule, w.e.timeArg(v.MeasuredAt), v.Value, v.Z, v.BaselineMean, v.BaselineSD,
		v.BaselineSource, w.e.timeArg(v.RecordedAt))
}
