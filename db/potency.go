package db

import (
	"context"
	"strconv"
	"strings"
	"time"
)

// PotencyRow is one curve result as a potency history sees it: the main
// estimate, the result document (activity call, qualifier, flags), the
// plate it came from and whether a later version (a refit) exists. Review
// events are read separately (Reviews).
type PotencyRow struct {
	ID, Kind    string
	PlateID     string // "" for a fit
	Barcode     string // the plate's; "" for a fit
	CurveKey    string
	AssayID     string
	CompoundID  string
	MeasuredAt  time.Time
	CreatedAt   time.Time
	RefitOf     string
	Status      string
	LogEC50     Estimate
	Result      []byte // JSON, as returned
	PlateQCPass *bool  // nil: a fit, or a plate never assessed
	Superseded  bool   // a refit of this curve exists
}

// PotencyFilter selects a compound's curves for CompoundPotency.
type PotencyFilter struct {
	CompoundID string    // required
	AssayID    string    // "" for every assay
	From, To   time.Time // measured_at in [From, To); zero does not bound
}

// potencyCols are read by scanPotency; c is curve_results, p plates.
const potencyCols = "c.id, c.kind, c.plate_id, COALESCE(p.barcode, ''), c.curve_key, c.assay_id, c.compound_id, c.measured_at, " +
	"c.created_at, c.refit_of, c.status, c.log_ec50, c.log_ec50_lo, c.log_ec50_hi, c.result, p.qc_pass, " +
	"EXISTS (SELECT 1 FROM curve_results n WHERE n.refit_of = c.id)"

const potencyFrom = " FROM curve_results c LEFT JOIN plates p ON p.id = c.plate_id"

func scanPotency(row rowScanner) (PotencyRow, error) {
	var r PotencyRow
	var measured, created dbTime
	var plate, assay, compound, refit *string
	err := row.Scan(&r.ID, &r.Kind, &plate, &r.Barcode, &r.CurveKey, &assay, &compound, &measured, &created, &refit, &r.Status,
		&r.LogEC50.Value, &r.LogEC50.Lo, &r.LogEC50.Hi, &r.Result, &r.PlateQCPass, &r.Superseded)
	r.MeasuredAt, r.CreatedAt = measured.t, created.t
	r.PlateID, r.AssayID, r.CompoundID, r.RefitOf = deref(plate), deref(assay), deref(compound), deref(refit)
	return r, err
}

// MaxPotencyRows bounds the curves of one history (CompoundPotency) or one
// page of an assay's compound table (AssayPotency).
const MaxPotencyRows = 20000

// CompoundPotency returns a compound's curves, single fits and plate curves
// alike, oldest experiment first (measured_at, then id). It uses the index
// curve_results_compound.
func (s *sqlStore) CompoundPotency(ctx context.Context, f PotencyFilter) ([]PotencyRow, error) {
	args := []any{f.CompoundID}
	q := "SELECT " + potencyCols + potencyFrom + " WHERE c.compound_id = $1"
	if f.AssayID != "" {
		args = append(args, f.AssayID)
		q += " AND c.assay_id = $" + strconv.Itoa(len(args))
	}
	if !f.From.IsZero() {
		args = append(args, s.e.timeArg(f.From))
		q += " AND c.measured_at >= $" + strconv.Itoa(len(args))
	}
	if !f.To.IsZero() {
		args = append(args, s.e.timeArg(f.To))
		q += " AND c.measured_at < $" + strconv.Itoa(len(args))
	}
	q += " ORDER BY c.measured_at, c.id LIMIT " + strconv.Itoa(MaxPotencyRows+1)
	return s.potencyRows(ctx, "CompoundPotency", f.CompoundID, q, args...)
}

// AssayCompounds returns one page of the compounds with curves in an
// assay, in compound ID order (descending when desc), after the cursor
// (a compound ID; "" for the first page). It walks the index
// curve_results_assay_compound.
func (s *sqlStore) AssayCompounds(ctx context.Context, assayID, after string, limit int, desc bool) ([]string, error) {
	const op = "AssayCompounds"
	if limit < 1 || limit > MaxListLimit {
		return nil, &Error{Op: op, Key: assayID, Field: "limit", Err: ErrInvalid}
	}
	cmp, order := ">", "ASC"
	if desc {
		cmp, order = "<", "DESC"
	}
	args := []any{assayID}
	q := "SELECT DISTINCT compound_id FROM curve_results WHERE assay_id = $1 AND compound_id IS NOT NULL"
	if after != "" {
		args = append(args, after)
		q += " AND compound_id " + cmp + " $2"
	}
	q += " ORDER BY compound_id " + order + " LIMIT " + strconv.Itoa(limit)
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, s.read(op, assayID, err)
	}
	defer rows.Close()
	var out []string
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			return nil, s.read(op, assayID, err)
		}
		out = append(out, id)
	}
	return out, s.read(op, assayID, rows.Err())
}

// AssayPotency returns the curves of the given compounds in an assay,
// by compound, then oldest experiment first.
func (s *sqlStore) AssayPotency(ctx context.Context, assayID string, compoundIDs []string) ([]PotencyRow, error) {
	if len(compoundIDs) == 0 {
		return nil, nil
	}
	q, args := assayPotencyQuery(assayID, compoundIDs)
	return s.potencyRows(ctx, "AssayPotency", assayID, q, args...)
}

// assayPotencyQuery is AssayPotency's statement.
func assayPotencyQuery(assayID string, compoundIDs []string) (string, []any) {
	args := []any{assayID}
	marks := make([]string, len(compoundIDs))
	for i, id := range compoundIDs {
		args = append(args, id)
		marks[i] = "$" + strconv.Itoa(len(args))
	}
	q := "SELECT " + potencyCols + potencyFrom + " WHERE c.assay_id = $1 AND c.compound_id IN (" + strings.Join(marks, ", ") + ")" +
		" ORDER BY c.compound_id, c.measured_at, c.id LIMIT " + strconv.Itoa(MaxPotencyRows+1)
	return q, args
}

// CurvePotency returns one curve as a potency row.
func (s *sqlStore) CurvePotency(ctx context.Context, id string) (*PotencyRow, error) {
	r, err := scanPotency(s.e.queryRow(ctx, "SELECT "+potencyCols+potencyFrom+" WHERE c.id = $1", id))
	if err != nil {
		return nil, s.read("CurvePotency", id, err)
	}
	return &r, nil
}

func (s *sqlStore) potencyRows(ctx context.Context, op, key, q string, args ...any) ([]PotencyRow, error) {
	return queryPotencyRows(ctx, s.e, s.e, op, key, q, args...)
}

// queryPotencyRows runs a potency row query on q (the pool or a
// transaction), at most MaxPotencyRows rows.
func queryPotencyRows(ctx context.Context, q querier, e engine, op, key, sql string, args ...any) ([]PotencyRow, error) {
	rows, err := q.query(ctx, sql, args...)
	if err != nil {
		return nil, opError(op, key, err, e.classify)
	}
	defer rows.Close()
	var out []PotencyRow
	for rows.Next() {
		r, err := scanPotency(rows)
		if err != nil {
			return nil, opError(op, key, err, e.classify)
		}
		if len(out) == MaxPotencyRows {
			return nil, &Error{Op: op, Key: key, Field: "rows", Err: ErrInvalid}
		}
		out = append(out, r)
	}
	return out, opError(op, key, rows.Err(), e.classify)
}
