package db

import (
	"context"
	"fmt"
	"strconv"
	"strings"
)

const fitCols = "id, created_at, submitted_by, assay_id, compound_id, refit_of, model, status, log_ec50, " +
	"engine_version, input_sha256, settings, input, result, labels"

func (w *sqlWriter) InsertFitRun(ctx context.Context, r *FitRun) error {
	const op = "InsertFitRun"
	docs := [...]struct {
		name string
		doc  []byte
		def  string
	}{{"settings", r.Settings, ""}, {"input", r.Input, ""}, {"result", r.Result, ""}, {"labels", r.Labels, "{}"}}
	var vals [len(docs)]any
	for i, d := range docs {
		v, ok := jsonDoc(d.doc, d.def)
		if !ok || v == nil {
			return w.invalid(op, r.ID, d.name)
		}
		vals[i] = v
	}
	err := w.insert(ctx, op, r.ID, "INSERT INTO fit_runs ("+fitCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15)",
		r.ID, w.e.timeArg(r.CreatedAt), r.SubmittedBy, nullString(r.AssayID), nullString(r.CompoundID), nullString(r.RefitOf),
		r.Model, r.Status, r.LogEC50, r.EngineVersion, r.InputSHA256, vals[0], vals[1], vals[2], vals[3])
	if err != nil || len(r.Params) == 0 {
		return err
	}
	// One multi-row INSERT for the parameters.
	var b strings.Builder
	b.WriteString("INSERT INTO fit_params (run_id, ord, name, estimate, se, wald_lo, wald_hi, boot_lo, boot_hi, fixed, at_bound) VALUES ")
	args := make([]any, 0, 11*len(r.Params))
	for i, p := range r.Params {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteByte('(')
		for k := 1; k <= 11; k++ {
			if k > 1 {
				b.WriteString(", ")
			}
			b.WriteByte('$')
			b.WriteString(strconv.Itoa(11*i + k))
		}
		b.WriteByte(')')
		args = append(args, r.ID, i, p.Name, p.Estimate, p.SE, p.WaldLo, p.WaldHi, p.BootLo, p.BootHi, p.Fixed, p.AtBound)
	}
	_, err = w.exec(ctx, op, r.ID, b.String(), args...)
	return err
}

func (s *sqlStore) FitRun(ctx context.Context, id string) (*FitRun, error) {
	r, err := scanFitRun(s.e.queryRow(ctx, "SELECT "+fitCols+" FROM fit_runs WHERE id = $1", id))
	if err != nil {
		return nil, s.read("FitRun", id, err)
	}
	rows, err := s.e.query(ctx, "SELECT name, estimate, se, wald_lo, wald_hi, boot_lo, boot_hi, fixed, at_bound "+
		"FROM fit_params WHERE run_id = $1 ORDER BY ord", id)
	if err != nil {
		return nil, s.read("FitRun", id, err)
	}
	defer rows.Close()
	for rows.Next() {
		var p FitParam
		if err := rows.Scan(&p.Name, &p.Estimate, &p.SE, &p.WaldLo, &p.WaldHi, &p.BootLo, &p.BootHi, &p.Fixed, &p.AtBound); err != nil {
			return nil, s.read("FitRun", id, err)
		}
		r.Params = append(r.Params, p)
	}
	return r, s.read("FitRun", id, rows.Err())
}

func scanFitRun(row rowScanner) (*FitRun, error) {
	var r FitRun
	var t dbTime
	var assay, compound, refit *string
	err := row.Scan(&r.ID, &t, &r.SubmittedBy, &assay, &compound, &refit, &r.Model, &r.Status, &r.LogEC50,
		&r.EngineVersion, &r.InputSHA256, &r.Settings, &r.Input, &r.Result, &r.Labels)
	if err != nil {
		return nil, err
	}
	r.CreatedAt = t.t
	r.AssayID, r.CompoundID, r.RefitOf = deref(assay), deref(compound), deref(refit)
	return &r, nil
}

// MaxListLimit bounds a page of FitRuns.
const MaxListLimit = 1000

func (s *sqlStore) FitRuns(ctx context.Context, f FitFilter) ([]FitRun, string, error) {
	limit := f.Limit
	if limit == 0 {
		limit = 100
	}
	if limit < 0 || limit > MaxListLimit {
		return nil, "", &Error{Op: "FitRuns", Field: "limit", Err: ErrInvalid,
			cause: fmt.Errorf("limit %d is outside 1–%d", f.Limit, MaxListLimit)}
	}
	var where []string
	var args []any
	add := func(cond string, v any) {
		args = append(args, v)
		where = append(where, strings.ReplaceAll(cond, "?", "$"+strconv.Itoa(len(args))))
	}
	if f.AssayID != "" {
		add("assay_id = ?", f.AssayID)
	}
	if f.CompoundID != "" {
		add("compound_id = ?", f.CompoundID)
	}
	if !f.From.IsZero() {
		add("created_at >= ?", s.e.timeArg(f.From))
	}
	if !f.To.IsZero() {
		add("created_at < ?", s.e.timeArg(f.To))
	}
	if f.Cursor != "" {
		add("id < ?", f.Cursor)
	}
	q := "SELECT " + fitCols + " FROM fit_runs"
	if len(where) > 0 {
		q += " WHERE " + strings.Join(where, " AND ")
	}
	// IDs are time-ordered (UUIDv7), so id order is creation order.
	args = append(args, limit+1)
	q += " ORDER BY id DESC LIMIT $" + strconv.Itoa(len(args))
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, "", s.read("FitRuns", "", err)
	}
	defer rows.Close()
	var out []FitRun
	for rows.Next() {
		r, err := scanFitRun(rows)
		if err != nil {
			return nil, "", s.read("FitRuns", "", err)
		}
		out = append(out, *r)
	}
	if err := rows.Err(); err != nil {
		return nil, "", s.read("FitRuns", "", err)
	}
	next := ""
	if len(out) > limit {
		out = out[:limit]
		next = out[limit-1].ID
	}
	return out, next, nil
}
