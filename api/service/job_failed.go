package service

import (
	"context"
	"errors"
	"fmt"

	"sluice/db"
)

// JobFailed is db.Handlers.Failed: a job's last attempt failed and the
// queue will not try it again, so its plate or queued analysis is marked
// failed with the error, and ?wait, the plate view and GET
// /v1/analyses/{id} say so instead of "running" forever. A plate or
// analysis that finished already keeps what it has.
func (s *Service) JobFailed(ctx context.Context, kind, target string, cause error) error {
	var err error
	switch kind {
	case db.JobPlateFit:
		err = s.failPlate(ctx, target, fmt.Errorf("gave up after the last attempt: %w", cause))
	case db.JobAnalysis:
		err = s.finishAnalysis(ctx, target, nil, fmt.Errorf("gave up after the last attempt: %w", cause))
	default:
		return fmt.Errorf("failed job of unknown kind %q (%s)", kind, target)
	}
	if errors.Is(err, db.ErrNotFound) {
		return nil // finished meanwhile
	}
	return err
}
