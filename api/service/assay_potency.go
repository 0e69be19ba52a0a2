package service

import (
	"context"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/potency"
)

// AssayPotencyQuery is GET /v1/assays/{id}/potency.
type AssayPotencyQuery struct {
	AssayID string
	// Sort is one of AssayPotencySorts, "-" in front for descending; ""
	// means "compound_id".
	Sort string
	// Cursor is the previous page's next_cursor; "" for the first page.
	Cursor string
	// Limit is 1–db.MaxListLimit; zero means 50.
	Limit int
	// MSRWindow as in PotencyQuery.
	MSRWindow int
}

// AssayPotencySorts are the compound table's sort keys, each the summary
// field of that name (compound_id and runs are the row's). Ascending
// unless prefixed with "-"; ties go by compound ID in the same direction;
// a compound without the value (no usable run; fewer than three for an
// MSR) comes last in either direction. geo_mean_ec50 orders as the mean log
// EC50, pec50_mean as its opposite.
var AssayPotencySorts = []string{"compound_id", "runs", "n", "geo_mean_ec50", "pec50_mean", "msr", "msr_overall"}

// assaySort maps a sort parameter to the stored column and direction.
func assaySort(v string) (db.PotencySort, bool, error) {
	name, desc := strings.CutPrefix(v, "-")
	switch name {
	case "compound_id":
		return db.SortCompound, desc, nil
	case "runs":
		return db.SortRuns, desc, nil
	case "n":
		return db.SortN, desc, nil
	case "geo_mean_ec50":
		return db.SortMeanLogEC50, desc, nil
	case "pec50_mean":
		return db.SortPEC50Mean, desc, nil
	case "msr":
		return db.SortMSR, desc, nil
	case "msr_overall":
		return db.SortMSROverall, desc, nil
	}
	return "", false, BadParameter("sort", "sort must be one of %s (\"-\" in front for descending), got %q",
		strings.Join(AssayPotencySorts, ", "), v)
}

// assayCursor is the compound table's cursor: the sort it was made for,
// the last row's sort key (null when it had none) and compound. It is
// sent as unpadded base64url JSON, opaque to clients.
type assayCursor struct {
	Sort       string   `json:"s"`
	Value      *float64 `json:"v"`
	CompoundID string   `json:"c"`
}

func (c assayCursor) encode() string {
	b, _ := json.Marshal(c) // a string, a float and a string: cannot fail
	return base64.RawURLEncoding.EncodeToString(b)
}

func decodeAssayCursor(s, sort string) (*db.PotencyCursor, error) {
	b, err := base64.RawURLEncoding.DecodeString(s)
	var c assayCursor
	if err == nil {
		err = json.Unmarshal(b, &c)
	}
	if err != nil || c.CompoundID == "" {
		return nil, BadParameter("cursor", "%q is not a cursor of this table; use next_cursor of the previous page as it is", s)
	}
	if c.Sort != sort {
		return nil, BadParameter("cursor", "the cursor was made for sort=%s, not sort=%s; start again without a cursor", c.Sort, sort)
	}
	return &db.PotencyCursor{Value: c.Value, CompoundID: c.CompoundID}, nil
}

// AssayPotency is an assay's compound table: one row per compound with
// the summary of its history (as Potency computes it), one page in the
// order asked for. The summaries are stored (potency_summaries) and
// brought up to date first (refreshPotency), so a page reads one row per
// compound and no curve; with a non-default msr_window the page's
// summaries are computed again from their curves.
func (s *Service) AssayPotency(ctx context.Context, q AssayPotencyQuery) (*wire.AssayPotency, error) {
	if q.MSRWindow != 0 && q.MSRWindow < potency.MinMSRRuns {
		return nil, BadParameter("msr_window", "%d is below the %d runs an MSR needs", q.MSRWindow, potency.MinMSRRuns)
	}
	limit := q.Limit
	if limit == 0 {
		limit = 50
	}
	if limit < 0 || limit > db.MaxListLimit {
		return nil, BadParameter("limit", "%d is not a whole number from 1 to %d", limit, db.MaxListLimit)
	}
	if q.Sort == "" {
		q.Sort = "compound_id"
	}
	key, desc, err := assaySort(q.Sort)
	if err != nil {
		return nil, err
	}
	stored := q.MSRWindow == 0 || q.MSRWindow == potency.DefaultMSRWindow
	if key == db.SortMSR && !stored {
		return nil, BadParameter("sort", "sort=%s orders by the MSR over the default window of %d runs; leave msr_window out to sort by it", q.Sort, potency.DefaultMSRWindow)
	}
	page := db.PotencyPage{AssayID: q.AssayID, Sort: key, Desc: desc, Limit: limit + 1}
	if q.Cursor != "" {
		if page.After, err = decodeAssayCursor(q.Cursor, q.Sort); err != nil {
			return nil, err
		}
	}
	if _, err := s.store.Assay(ctx, q.AssayID); err != nil {
		return nil, err
	}
	if err := s.refreshPotency(ctx, q.AssayID); err != nil {
		return nil, err
	}
	sums, err := s.store.PotencySummaries(ctx, page)
	if err != nil {
		return nil, err
	}
	out := &wire.AssayPotency{AssayID: q.AssayID, Compounds: []wire.AssayPotencyRow{}, Caution: wire.Caution}
	if len(sums) > limit {
		sums = sums[:limit]
		last := sums[limit-1]
		c := assayCursor{Sort: q.Sort, CompoundID: last.CompoundID}
		switch key {
		case db.SortCompound:
		case db.SortRuns:
			v := float64(last.Runs)
			c.Value = &v
		case db.SortN:
			v := float64(last.N)
			c.Value = &v
		case db.SortMeanLogEC50:
			c.Value = last.MeanLogEC50
		case db.SortPEC50Mean:
			c.Value = last.PEC50Mean
		case db.SortMSR:
			c.Value = last.MSR
		case db.SortMSROverall:
			c.Value = last.MSROverall
		}
		out.NextCursor = c.encode()
	}
	if stored {
		for _, r := range sums {
			row := wire.AssayPotencyRow{CompoundID: r.CompoundID, Runs: r.Runs, LastMeasured: r.LastMeasured.Format(time.RFC3339Nano)}
			if err := json.Unmarshal(r.Doc, &row.Summary); err != nil {
				return nil, fmt.Errorf("stored summary of %s in %s: %w", r.CompoundID, r.AssayID, err)
			}
			out.Compounds = append(out.Compounds, row)
		}
		return out, nil
	}
	ids := make([]string, len(sums))
	for i, r := range sums {
		ids[i] = r.CompoundID
	}
	rows, err := s.store.AssayPotency(ctx, q.AssayID, ids)
	if errors.Is(err, db.ErrInvalid) {
		return nil, BadParameter("limit", "the page holds more than %d curves; ask for fewer compounds", db.MaxPotencyRows)
	}
	if err != nil {
		return nil, err
	}
	reviews, err := s.latestReviews(ctx, rows)
	if err != nil {
		return nil, err
	}
	rowsOf := byCompound(rows)
	set := &potency.HistorySettings{MSRWindow: q.MSRWindow}
	for _, id := range ids {
		row, err := compoundRow(id, q.AssayID, rowsOf[id], reviews, set)
		if err != nil {
			return nil, err
		}
		out.Compounds = append(out.Compounds, row)
	}
	return out, nil
}

// byCompound groups potency rows by compound, keeping their order.
func byCompound(rows []db.PotencyRow) map[string][]db.PotencyRow {
	out := map[string][]db.PotencyRow{}
	for _, r := range rows {
		out[r.CompoundID] = append(out[r.CompoundID], r)
	}
	return out
}

// compoundRow is one compound's row of the table from its curves (oldest
// experiment first).
func compoundRow(compoundID, assayID string, rs []db.PotencyRow, reviews map[string]db.Review, set *potency.HistorySettings) (wire.AssayPotencyRow, error) {
	h, err := history(compoundID, assayID, rs, reviews, set, false)
	if err != nil {
		return wire.AssayPotencyRow{}, err
	}
	row := wire.AssayPotencyRow{CompoundID: compoundID, Runs: len(rs), Summary: h.Summary}
	if len(rs) > 0 {
		row.LastMeasured = rs[len(rs)-1].MeasuredAt.Format(time.RFC3339Nano)
	}
	return row, nil
}

// refreshChunk is how many stale compounds refreshPotency summarises in
// one transaction (a few thousand curves at typical history lengths).
const refreshChunk = 100

// refreshPotency brings an assay's stored compound summaries up to date:
// the compounds a write has marked stale (new curves or versions, review
// events, a plate's QC verdict; potency_stale, filled by triggers in the
// writing transaction) are summarised again from their curves, at the
// default MSR window, refreshChunk at a time, each chunk in the
// transaction that takes it off the list (so work done survives a
// cancelled request). With nothing stale it costs one read
// (PotencyStale). After a migration or a bulk load every compound is
// stale, and the first read of each assay pays for all of them.
func (s *Service) refreshPotency(ctx context.Context, assayID string) error {
	if stale, err := s.store.PotencyStale(ctx, assayID); err != nil || !stale {
		return err
	}
	for {
		n := 0
		err := s.store.Write(ctx, func(w db.Writer) error {
			ids, err := w.TakeStalePotency(ctx, assayID, refreshChunk)
			if err != nil {
				return err
			}
			n = len(ids)
			return s.resummarise(ctx, w, assayID, ids)
		})
		if err != nil || n < refreshChunk {
			return err
		}
	}
}

// resummarise computes and stores the summaries of some compounds of an
// assay from their curves, in w's transaction.
func (s *Service) resummarise(ctx context.Context, w db.Writer, assayID string, ids []string) error {
	if len(ids) == 0 {
		return nil
	}
	rows, err := w.AssayPotency(ctx, assayID, ids)
	if err != nil {
		return fmt.Errorf("refresh potency summaries of %s: %w", assayID, err)
	}
	curveIDs := make([]string, len(rows))
	for i, r := range rows {
		curveIDs[i] = r.ID
	}
	evs, err := w.Reviews(ctx, curveIDs)
	if err != nil {
		return err
	}
	reviews := make(map[string]db.Review, len(evs))
	for _, e := range evs { // oldest first per curve: the last one wins
		reviews[e.CurveID] = e
	}
	rowsOf := byCompound(rows)
	set := &potency.HistorySettings{}
	sums := make([]db.PotencySummary, 0, len(ids))
	for _, id := range ids {
		if len(rowsOf[id]) == 0 {
			continue // curves are never deleted; nothing to summarise
		}
		row, err := compoundRow(id, assayID, rowsOf[id], reviews, set)
		if err != nil {
			return err
		}
		sum, err := storedSummary(assayID, row)
		if err != nil {
			return err
		}
		sums = append(sums, sum)
	}
	return w.PutPotencySummaries(ctx, sums)
}

// storedSummary is a table row as potency_summaries stores it.
func storedSummary(assayID string, row wire.AssayPotencyRow) (db.PotencySummary, error) {
	doc, err := json.Marshal(row.Summary)
	if err != nil {
		return db.PotencySummary{}, fmt.Errorf("summary of %s in %s: %w", row.CompoundID, assayID, err)
	}
	at, err := time.Parse(time.RFC3339Nano, row.LastMeasured)
	if err != nil {
		return db.PotencySummary{}, fmt.Errorf("summary of %s in %s: %w", row.CompoundID, assayID, err)
	}
	m := row.Summary
	return db.PotencySummary{AssayID: assayID, CompoundID: row.CompoundID, Runs: row.Runs, LastMeasured: at, N: m.N,
		MeanLogEC50: finite(float64(m.MeanLogEC50)), PEC50Mean: finite(float64(m.PEC50Mean)), MSR: finite(float64(m.MSR)), MSROverall: finite(float64(m.MSROverall)), Doc: doc}, nil
}
