package db

import "context"

// UnreviewedCurves returns the newest stored curves (by created_at, then
// ID) that no one has reviewed and no refit has superseded, at most limit:
// the candidates for a review queue. It walks the created_at index
// backwards, so its cost is the rows it skips, not the table.
func (s *sqlStore) UnreviewedCurves(ctx context.Context, limit int) ([]PotencyRow, error) {
	return s.potencyRows(ctx, "UnreviewedCurves", "", "SELECT "+potencyCols+potencyFrom+
		" WHERE NOT EXISTS (SELECT 1 FROM curve_reviews r WHERE r.curve_id = c.id)"+
		" AND NOT EXISTS (SELECT 1 FROM curve_results n WHERE n.refit_of = c.id)"+
		" ORDER BY c.created_at DESC, c.id DESC LIMIT $1", limit)
}
