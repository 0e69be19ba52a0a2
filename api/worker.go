package api

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strconv"
	"sync"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// PlateCurve is one curve of a plate on the wire: the result object with
// the compound (and antagonist) it belongs to.
type PlateCurve struct {
	Key            string  `json:"key"`
	CompoundID     string  `json:"compound_id"`
	AntagonistID   string  `json:"antagonist_id,omitempty"`
	AntagonistConc float64 `json:"antagonist_conc,omitempty"`
	wire.FitResult
}

// FitPlate is the plate job: QC the plate, normalise it to its controls,
// fit every curve in parallel, and store every result in one transaction.
// A worker that dies before the end leaves nothing; the retried job redoes
// the work (it is deterministic: bootstrap seeds are stored) and never
// duplicates a curve.
func (s *Server) FitPlate(ctx context.Context, plateID string) error {
	p, err := s.store.Plate(ctx, plateID)
	if err != nil {
		return fmt.Errorf("plate %s: %w", plateID, err)
	}
	if p.Status == db.PlateDone || p.Status == db.PlateFailed {
		return nil
	}
	rows, err := s.store.Wells(ctx, plateID)
	if err != nil {
		return fmt.Errorf("wells of %s: %w", plateID, err)
	}
	var set plateSettings
	if err := json.Unmarshal(p.Settings, &set); err != nil {
		return s.failPlate(ctx, plateID, fmt.Errorf("stored settings: %w", err))
	}
	f, err := plate.ParseFormat(strconv.Itoa(p.Format))
	if err != nil {
		return s.failPlate(ctx, plateID, err)
	}
	var measured []plate.Measured
	var wells []plate.PlateWell
	for _, r := range rows {
		if r.Value == nil || r.Role == string(plate.Excluded) || r.Role == string(plate.Empty) {
			continue
		}
		w := plate.Well{Row: r.Row, Col: r.Col}
		measured = append(measured, plate.Measured{Well: w, Role: plate.Role(r.Role), Value: *r.Value})
		wells = append(wells, plate.PlateWell{Well: w, Role: plate.Role(r.Role), CompoundID: r.CompoundID, Conc: r.Conc,
			Value: *r.Value, AntagonistID: r.AntagonistID, AntagonistConc: r.AntagonistConc})
	}
	var th plate.Thresholds
	if set.QC != nil {
		th = *set.QC
	}
	qc, err := plate.Assess(f, measured, th)
	if err != nil {
		return s.failPlate(ctx, plateID, err)
	}
	qcJSON, _ := json.Marshal(qc)
	specs := plate.Curves(wells, plate.Mode(p.Mode), qc.MeanMax, qc.MeanMin)
	curves := make([]fit.Curve, len(specs))
	for i, cs := range specs {
		curves[i] = cs.Curve
	}
	s.store.SetPlateProgress(ctx, plateID, db.PlateRunning, 0, len(curves))
	fs := &fit.Settings{Model: fit.Model(set.Fit.Model), Fixed: set.Fit.Fixed, Confidence: set.Fit.Confidence, MaxHill: set.Fit.MaxHill}
	var bs *fit.BootSettings
	if b := set.Fit.Bootstrap; b != nil {
		bs = &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval), Seed: *b.Seed}
	}
	// Progress is advisory: written at most every 100 ms, off the fit's path.
	var mu sync.Mutex
	last := time.Now()
	progress := func(done int) {
		mu.Lock()
		defer mu.Unlock()
		if time.Since(last) > 100*time.Millisecond {
			last = time.Now()
			s.store.SetPlateProgress(ctx, plateID, db.PlateRunning, done, len(curves))
		}
	}
	start := time.Now()
	results, err := fit.FitBatch(ctx, curves, fs, bs, s.cfg.FitWorkers, progress)
	if err != nil {
		if errors.Is(err, fit.ErrInvalidInput) {
			return s.failPlate(ctx, plateID, err)
		}
		return err // cancelled: River retries
	}
	out := make([]db.PlateCurve, len(results))
	for i, r := range results {
		s.metrics.fits.WithLabelValues(string(r.Model), r.Status).Inc()
		if r.Boot != nil {
			s.metrics.resamples.Add(float64(r.Boot.Resamples))
			s.metrics.failedRefits.Add(float64(r.Boot.Failed))
		}
		pc := PlateCurve{Key: specs[i].Key, CompoundID: specs[i].CompoundID, AntagonistID: specs[i].AntagonistID,
			AntagonistConc: specs[i].AntagonistConc, FitResult: wire.FromFit(r)}
		b, _ := json.Marshal(pc)
		out[i] = db.PlateCurve{Key: pc.Key, CompoundID: pc.CompoundID, AntagonistID: pc.AntagonistID,
			AntagonistConc: pc.AntagonistConc, Status: r.Status, Result: b}
		if r.Converged() {
			l := r.LogEC50().Estimate
			out[i].LogEC50 = &l
		}
	}
	s.metrics.plateDuration.Observe(time.Since(start).Seconds())
	if err := ctx.Err(); err != nil {
		return err
	}
	return s.store.Write(ctx, func(w db.Writer) error {
		return w.FinishPlate(ctx, plateID, db.PlateDone, qcJSON, out, "")
	})
}

// failPlate marks a plate that cannot be fitted whatever the retries.
func (s *Server) failPlate(ctx context.Context, plateID string, cause error) error {
	err := s.store.Write(ctx, func(w db.Writer) error {
		return w.FinishPlate(ctx, plateID, db.PlateFailed, nil, nil, cause.Error())
	})
	if err != nil {
		return err
	}
	s.log.Warn("plate failed", "plate", plateID, "err", cause)
	return nil
}
