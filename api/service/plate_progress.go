package service

import (
	"context"
	"time"

	"sluice/db"
	"sluice/fit"
)

// reportProgress writes the curves counted in progress to the plate every
// 100 ms from its own goroutine, until the returned function is called; that
// function returns once the goroutine has ended.
func (s *Service) reportProgress(ctx context.Context, plateID string, progress *fit.Progress, total int) (stop func()) {
	done := make(chan struct{})
	ended := make(chan struct{})
	go func() {
		defer close(ended)
		t := time.NewTicker(100 * time.Millisecond)
		defer t.Stop()
		last := 0
		for {
			select {
			case <-done:
				return
			case <-ctx.Done():
				return
			case <-t.C:
				if n := progress.Curves(); n != last {
					last = n
					s.setProgress(ctx, plateID, n, total)
				}
			}
		}
	}()
	return func() {
		close(done)
		<-ended
	}
}

// setProgress records a running plate's progress. It is advisory: a
// failure is logged, and the job goes on.
func (s *Service) setProgress(ctx context.Context, plateID string, done, total int) {
	if err := s.store.SetPlateProgress(ctx, plateID, db.PlateRunning, done, total); err != nil && ctx.Err() == nil {
		s.log.Warn("plate progress", "plate", plateID, "err", err)
	}
}
