package service

import (
	"context"

	"sluice/api/wire"
	"sluice/fit"
)

// reviewScan is how many of the newest unreviewed curves AwaitingReview
// looks through for the ones that need a person.
const reviewScan = 200

// AwaitingReview lists up to n of the newest curves that need a person's
// decision: never reviewed, not superseded by a refit, and flagged, not
// converged, or from a plate that failed QC. It looks through the newest
// reviewScan unreviewed curves only, so older ones drop off the list as new
// plates arrive (the compound and plate pages still show them).
func (s *Service) AwaitingReview(ctx context.Context, n int) ([]wire.PotencyRecord, error) {
	rows, err := s.store.UnreviewedCurves(ctx, reviewScan)
	if err != nil {
		return nil, err
	}
	out := []wire.PotencyRecord{}
	for _, r := range rows {
		if len(out) == n {
			break
		}
		rec, _, err := record(r, nil)
		if err != nil {
			return nil, err
		}
		if len(rec.Flags) > 0 || rec.Status != fit.StatusConverged || rec.PlateQCFailed {
			out = append(out, rec)
		}
	}
	return out, nil
}
