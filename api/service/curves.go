package service

import (
	"context"
	"errors"
	"strings"

	"sluice/api/wire"
	"sluice/db"
)

// Curve is GET /v1/curves/{id}: a stored curve of either kind with its
// potency record, every review event and, for a refit, what it left out.
func (s *Service) Curve(ctx context.Context, id string) (*wire.Curve, error) {
	row, err := s.store.CurvePotency(ctx, id)
	if err != nil {
		return nil, err
	}
	evs, err := s.store.Reviews(ctx, []string{id})
	if err != nil {
		return nil, err
	}
	var ref *db.Refit
	if row.RefitOf != "" {
		if ref, err = s.store.CurveRefit(ctx, id); err != nil && !errors.Is(err, db.ErrNotFound) {
			return nil, err
		}
	}
	return curveView(*row, evs, ref)
}

// curveView assembles a curve's view; evs are its review events, oldest
// first.
func curveView(row db.PotencyRow, evs []db.Review, ref *db.Refit) (*wire.Curve, error) {
	latest := map[string]db.Review{}
	if len(evs) > 0 {
		latest[row.ID] = evs[len(evs)-1]
	}
	rec, run, err := record(row, latest)
	if err != nil {
		return nil, err
	}
	rec.Usable = true
	if r := classify(run); r != "" {
		rec.Usable, rec.Excluded = false, r
	}
	key, _, _ := strings.Cut(row.CurveKey, "#")
	out := &wire.Curve{PotencyRecord: rec, CurveKey: key, Reviews: []wire.ReviewEvent{}, Result: row.Result, Caution: wire.Caution}
	for _, e := range evs {
		out.Reviews = append(out.Reviews, *reviewOut(e))
	}
	if ref != nil {
		out.Exclusions, out.RefitReason = ref.Exclusions, ref.Reason
	}
	return out, nil
}

// SupersededBy is the version that refitted curve id (the newest, should
// there be several), "" when none has: the old version's page links
// forward to it.
func (s *Service) SupersededBy(ctx context.Context, id string) (string, error) {
	row, err := s.store.CurvePotency(ctx, id)
	if err != nil || !row.Superseded || row.CompoundID == "" {
		// (A fit stored without a compound has no history to search.)
		return "", err
	}
	rows, err := s.store.CompoundPotency(ctx, db.PotencyFilter{CompoundID: row.CompoundID, AssayID: row.AssayID})
	if err != nil {
		return "", err
	}
	var next *db.PotencyRow
	for i, r := range rows {
		if r.RefitOf == id && (next == nil || r.CreatedAt.After(next.CreatedAt)) {
			next = &rows[i]
		}
	}
	if next == nil {
		return "", nil
	}
	return next.ID, nil
}
