package service

import (
	"context"
	"errors"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/potency"
)

// AssayPotencyQuery is GET /v1/assays/{id}/potency.
type AssayPotencyQuery struct {
	AssayID string
	// Desc orders the compounds by ID descending; false ascending.
	Desc bool
	// Cursor is the last compound ID of the previous page; "" for the first.
	Cursor string
	// Limit is 1–db.MaxListLimit; zero means 50.
	Limit int
	// MSRWindow as in PotencyQuery.
	MSRWindow int
}

// AssayPotency is an assay's compound table: one row per compound with the
// summary of its history (as Potency computes it), one page in compound
// order. A page costs one index walk for its compounds and one query for
// their curves.
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
	if _, err := s.store.Assay(ctx, q.AssayID); err != nil {
		return nil, err
	}
	ids, err := s.store.AssayCompounds(ctx, q.AssayID, q.Cursor, limit+1, q.Desc)
	if err != nil {
		return nil, err
	}
	out := &wire.AssayPotency{AssayID: q.AssayID, Compounds: []wire.AssayPotencyRow{}, Caution: wire.Caution}
	if len(ids) > limit {
		ids = ids[:limit]
		out.NextCursor = ids[limit-1]
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
	byCompound := map[string][]db.PotencyRow{}
	for _, r := range rows {
		byCompound[r.CompoundID] = append(byCompound[r.CompoundID], r)
	}
	set := &potency.HistorySettings{MSRWindow: q.MSRWindow}
	for _, id := range ids {
		rs := byCompound[id]
		h, err := history(id, q.AssayID, rs, reviews, set, false)
		if err != nil {
			return nil, err
		}
		row := wire.AssayPotencyRow{CompoundID: id, Runs: len(rs), Summary: h.Summary}
		if len(rs) > 0 {
			row.LastMeasured = rs[len(rs)-1].MeasuredAt.Format(time.RFC3339Nano)
		}
		out.Compounds = append(out.Compounds, row)
	}
	return out, nil
}
