package db

import (
	"context"
	"slices"
	"strconv"
	"strings"
	"time"
)

// PotencySummary is one row of an assay's compound table as stored in
// potency_summaries: the summary of a compound's history in the assay at
// the default MSR window, computed by the service from the curves. Doc is
// the summary as the API shows it (JSON); the sort keys are columns too.
// The rows are derived data: potency_stale lists the ones a write has made
// out of date (TakeStalePotency).
type PotencySummary struct {
	AssayID, CompoundID string
	Runs                int
	LastMeasured        time.Time
	N                   int
	// MeanLogEC50, MSR and MSROverall are nil when the history has none
	// (no usable run; fewer than three for an MSR).
	// PEC50Mean is −MeanLogEC50, a column of its own so that both
	// orders walk an index with ties by compound ID in the same direction.
	MeanLogEC50, PEC50Mean, MSR, MSROverall *float64
	Doc                                     []byte
}

// PotencySort is a key the compound table sorts by; each is a column of
// potency_summaries.
type PotencySort string

// The compound table's sort keys.
const (
	SortCompound    PotencySort = "compound_id"
	SortRuns        PotencySort = "runs"
	SortN           PotencySort = "n"
	SortMeanLogEC50 PotencySort = "mean_log_ec50"
	SortPEC50Mean   PotencySort = "pec50_mean"
	SortMSR         PotencySort = "msr"
	SortMSROverall  PotencySort = "msr_overall"
)

// nullable reports whether the key's column may be NULL (such rows sort
// last, in either direction).
func (k PotencySort) nullable() bool {
	return k == SortMeanLogEC50 || k == SortPEC50Mean || k == SortMSR || k == SortMSROverall
}

func (k PotencySort) valid() bool {
	return slices.Contains([]PotencySort{SortCompound, SortRuns, SortN, SortMeanLogEC50, SortPEC50Mean, SortMSR, SortMSROverall}, k)
}

// PotencyCursor is where a page of the compound table starts: after the
// row with this compound and this sort key (Value nil when the key was
// NULL; unused for SortCompound).
type PotencyCursor struct {
	Value      *float64
	CompoundID string
}

// PotencyPage selects one page of an assay's compound table.
type PotencyPage struct {
	AssayID string
	Sort    PotencySort
	Desc    bool
	After   *PotencyCursor // nil for the first page
	Limit   int            // 1–MaxListLimit
}

const potencySummaryCols = "assay_id, compound_id, runs, last_measured_at, n, mean_log_ec50, pec50_mean, msr, msr_overall, summary"

// PotencySummaries returns one page of an assay's stored compound summaries
// in the page's order, ties broken by compound ID in the same direction;
// NULL keys sort last either way. Each key has an index (assay_id, key,
// compound_id), walked forwards or backwards: first over the rows with a
// value (a row-value comparison with the cursor), then, while the page is
// not full, over the NULLs by compound ID. So a page reads its own rows
// only, whatever the key.
func (s *sqlStore) PotencySummaries(ctx context.Context, p PotencyPage) ([]PotencySummary, error) {
	const op = "PotencySummaries"
	if p.Limit < 1 || p.Limit > MaxListLimit {
		return nil, &Error{Op: op, Key: p.AssayID, Field: "limit", Err: ErrInvalid}
	}
	if !p.Sort.valid() {
		return nil, &Error{Op: op, Key: p.AssayID, Field: "sort", Err: ErrInvalid}
	}
	cmp, dir := ">", " ASC"
	if p.Desc {
		cmp, dir = "<", " DESC"
	}
	col, c := string(p.Sort), p.After
	sel := "SELECT " + potencySummaryCols + " FROM potency_summaries WHERE assay_id = $1"
	var out []PotencySummary
	// The rows with a value (every row for a key that cannot be NULL).
	if c == nil || c.Value != nil || p.Sort == SortCompound {
		args := []any{p.AssayID}
		q := sel
		if p.Sort == SortCompound {
			if c != nil {
				args = append(args, c.CompoundID)
				q += " AND compound_id " + cmp + " $2"
			}
			q += " ORDER BY compound_id" + dir
		} else {
			if p.Sort.nullable() {
				q += " AND " + col + " IS NOT NULL"
			}
			if c != nil {
				var v any = *c.Value
				if !p.Sort.nullable() {
					v = int64(*c.Value) // an INTEGER column
				}
				args = append(args, v, c.CompoundID)
				q += " AND (" + col + ", compound_id) " + cmp + " ($2, $3)"
			}
			q += " ORDER BY " + col + dir + ", compound_id" + dir
		}
		rows, err := s.summaryRows(ctx, q+" LIMIT "+strconv.Itoa(p.Limit), args...)
		if err != nil {
			return nil, s.read(op, p.AssayID, err)
		}
		out = rows
	}
	// Then the NULLs, by compound ID.
	if p.Sort.nullable() && len(out) < p.Limit {
		args := []any{p.AssayID}
		q := sel + " AND " + col + " IS NULL"
		if c != nil && c.Value == nil {
			args = append(args, c.CompoundID)
			q += " AND compound_id " + cmp + " $2"
		}
		q += " ORDER BY compound_id" + dir + " LIMIT " + strconv.Itoa(p.Limit-len(out))
		rows, err := s.summaryRows(ctx, q, args...)
		if err != nil {
			return nil, s.read(op, p.AssayID, err)
		}
		out = append(out, rows...)
	}
	return out, nil
}

func (s *sqlStore) summaryRows(ctx context.Context, q string, args ...any) ([]PotencySummary, error) {
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []PotencySummary
	for rows.Next() {
		var r PotencySummary
		var at dbTime
		if err := rows.Scan(&r.AssayID, &r.CompoundID, &r.Runs, &at, &r.N, &r.MeanLogEC50, &r.PEC50Mean, &r.MSR, &r.MSROverall, &r.Doc); err != nil {
			return nil, err
		}
		r.LastMeasured = at.t
		out = append(out, r)
	}
	return out, rows.Err()
}

// PotencyStale reports whether any compound of the assay has a stale
// summary (one index probe; the common case of a read is false).
func (s *sqlStore) PotencyStale(ctx context.Context, assayID string) (bool, error) {
	var n int
	err := s.e.queryRow(ctx, "SELECT COUNT(*) FROM (SELECT 1 FROM potency_stale WHERE assay_id = $1 LIMIT 1) t", assayID).Scan(&n)
	return n > 0, s.read("PotencyStale", assayID, err)
}

// TakeStalePotency takes up to limit of an assay's stale compounds (in
// compound order) off potency_stale and returns them, sorted, once each.
// It runs first in the transaction that recomputes their summaries: a
// write that commits after it leaves its own mark, so no change is lost,
// and a concurrent taker waits for this transaction and then finds the
// rows gone.
func (w *sqlWriter) TakeStalePotency(ctx context.Context, assayID string, limit int) ([]string, error) {
	const op = "TakeStalePotency"
	if w.err != nil {
		return nil, w.err
	}
	if limit < 1 {
		return nil, w.invalid(op, assayID, "limit")
	}
	rows, err := w.q.query(ctx, "DELETE FROM potency_stale WHERE assay_id = $1 AND compound_id IN "+
		"(SELECT DISTINCT compound_id FROM potency_stale WHERE assay_id = $1 ORDER BY compound_id LIMIT "+strconv.Itoa(limit)+
		") RETURNING compound_id", assayID)
	if err != nil {
		return nil, w.abort(opError(op, assayID, err, w.e.classify))
	}
	defer rows.Close()
	seen := map[string]bool{}
	var out []string
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			return nil, w.abort(opError(op, assayID, err, w.e.classify))
		}
		if !seen[id] {
			seen[id] = true
			out = append(out, id)
		}
	}
	if err := rows.Err(); err != nil {
		return nil, w.abort(opError(op, assayID, err, w.e.classify))
	}
	slices.Sort(out)
	return out, nil
}

// AssayPotency is Store.AssayPotency inside the write's transaction.
func (w *sqlWriter) AssayPotency(ctx context.Context, assayID string, compoundIDs []string) ([]PotencyRow, error) {
	if w.err != nil {
		return nil, w.err
	}
	if len(compoundIDs) == 0 {
		return nil, nil
	}
	q, args := assayPotencyQuery(assayID, compoundIDs)
	rows, err := queryPotencyRows(ctx, w.q, w.e, "AssayPotency", assayID, q, args...)
	if err != nil {
		return nil, w.abort(err)
	}
	return rows, nil
}

// Reviews is Store.Reviews inside the write's transaction.
func (w *sqlWriter) Reviews(ctx context.Context, curveIDs []string) ([]Review, error) {
	if w.err != nil {
		return nil, w.err
	}
	rs, err := queryReviews(ctx, w.q, w.e, curveIDs)
	if err != nil {
		return nil, w.abort(err)
	}
	return rs, nil
}

// PutPotencySummaries stores summaries, replacing those of the same
// (assay, compound), in chunks of one statement each.
func (w *sqlWriter) PutPotencySummaries(ctx context.Context, rs []PotencySummary) error {
	const op, per = "PutPotencySummaries", 10
	for len(rs) > 0 {
		chunk := rs[:min(len(rs), 200)]
		rs = rs[len(chunk):]
		args := make([]any, 0, per*len(chunk))
		vals := make([]string, len(chunk))
		for i, r := range chunk {
			marks := make([]string, per)
			for j := range marks {
				marks[j] = "$" + strconv.Itoa(i*per+j+1)
			}
			vals[i] = "(" + strings.Join(marks, ", ") + ")"
			args = append(args, r.AssayID, r.CompoundID, r.Runs, w.e.timeArg(r.LastMeasured), r.N, r.MeanLogEC50, r.PEC50Mean, r.MSR, r.MSROverall, string(r.Doc))
		}
		q := "INSERT INTO potency_summaries (" + potencySummaryCols + ") VALUES " + strings.Join(vals, ", ") +
			" ON CONFLICT (assay_id, compound_id) DO UPDATE SET runs = excluded.runs, last_measured_at = excluded.last_measured_at," +
			" n = excluded.n, mean_log_ec50 = excluded.mean_log_ec50, pec50_mean = excluded.pec50_mean, msr = excluded.msr, msr_overall = excluded.msr_overall," +
			" summary = excluded.summary"
		if _, err := w.exec(ctx, op, chunk[0].AssayID, q, args...); err != nil {
			return err
		}
	}
	return nil
}
