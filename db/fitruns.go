package db

import (
	"context"
	"strconv"
	"strings"
)

// A fit run is a curve result of kind KindFit; these methods keep the
// FitRun view of it.

func (w *sqlWriter) InsertFitRun(ctx context.Context, r *FitRun) error {
	const op = "InsertFitRun"
	cr := &CurveResult{ID: r.ID, Kind: KindFit, AssayID: r.AssayID, CompoundID: r.CompoundID, MeasuredAt: r.MeasuredAt,
		CreatedAt: r.CreatedAt, SubmittedBy: r.SubmittedBy, RefitOf: r.RefitOf, Model: r.Model, Status: r.Status,
		EngineVersion: r.EngineVersion, InputSHA256: r.InputSHA256, Settings: r.Settings, Input: r.Input, Result: r.Result,
		Labels: r.Labels, Params: r.Params, BootCols: r.BootCols, BootDraws: r.BootDraws}
	cr.LogEC50, cr.Hill, cr.Top, cr.Bottom = estimateOf(r.Params, "log_ec50"), estimateOf(r.Params, "hill"),
		estimateOf(r.Params, "top"), estimateOf(r.Params, "bottom")
	cr.LogEC50.Value = r.LogEC50
	args, field := w.resultArgs(cr)
	if field != "" {
		return w.invalid(op, r.ID, field)
	}
	return w.later(ctx, op, r.ID, resultInsert, args...)
}

func fitRunOf(c *CurveResult) *FitRun {
	return &FitRun{ID: c.ID, CreatedAt: c.CreatedAt, SubmittedBy: c.SubmittedBy, AssayID: c.AssayID, CompoundID: c.CompoundID,
		RefitOf: c.RefitOf, Model: c.Model, Status: c.Status, LogEC50: c.LogEC50.Value, EngineVersion: c.EngineVersion,
		InputSHA256: c.InputSHA256, Settings: c.Settings, Input: c.Input, Result: c.Result, Labels: c.Labels, Params: c.Params,
		MeasuredAt: c.MeasuredAt, BootCols: c.BootCols, BootDraws: c.BootDraws}
}

func (s *sqlStore) FitRun(ctx context.Context, id string) (*FitRun, error) {
	c, err := scanResult(s.e.queryRow(ctx, "SELECT "+resultCols+" FROM curve_results WHERE id = $1 AND kind = 'fit'", id))
	if err != nil {
		return nil, s.read("FitRun", id, err)
	}
	return fitRunOf(c), nil
}

// MaxListLimit bounds a page of FitRuns.
const MaxListLimit = 1000

func (s *sqlStore) FitRuns(ctx context.Context, f FitFilter) ([]FitRun, string, error) {
	const op = "FitRuns"
	limit := f.Limit
	if limit == 0 {
		limit = 100
	}
	if limit < 0 || limit > MaxListLimit {
		return nil, "", &Error{Op: op, Field: "limit", Err: ErrInvalid}
	}
	where := []string{"kind = 'fit'"}
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
	// IDs are time-ordered (UUIDv7), so id order is creation order.
	args = append(args, limit+1)
	q := "SELECT " + resultCols + " FROM curve_results WHERE " + strings.Join(where, " AND ") +
		" ORDER BY id DESC LIMIT $" + strconv.Itoa(len(args))
	cs, err := s.results(ctx, op, "", q, args...)
	if err != nil {
		return nil, "", err
	}
	out := make([]FitRun, len(cs))
	for i := range cs {
		out[i] = *fitRunOf(&cs[i])
	}
	next := ""
	if len(out) > limit {
		out = out[:limit]
		next = out[limit-1].ID
	}
	return out, next, nil
}
