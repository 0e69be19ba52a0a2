package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strconv"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
)

// RunPlateJob is the plate job (a db.WorkFunc): QC the plate, normalise it
// to its controls, fit every curve in parallel, and store every result in
// one transaction, with the QC. A worker that dies or is cancelled before
// the end leaves nothing; the retried job redoes the work (it is
// deterministic: bootstrap seeds are stored) and never duplicates a curve
// (curves are stored ON CONFLICT DO NOTHING). A plate that cannot be
// fitted whatever the retries is marked failed and the job ends; a
// cancelled one returns the error, so that the queue retries it.
func (s *Service) RunPlateJob(ctx context.Context, plateID string) error {
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
	var set wire.PlateSettings
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
	qcJSON, err := json.Marshal(wire.FromQC(qc))
	if err != nil {
		return fmt.Errorf("plate %s QC: %w", plateID, err)
	}
	specs := plate.Curves(wells, plate.Mode(p.Mode), qc.MeanMax, qc.MeanMin)
	curves := make([]fit.Curve, len(specs))
	for i, cs := range specs {
		curves[i] = cs.Curve
	}
	s.setProgress(ctx, plateID, 0, len(curves))
	fs := &fit.Settings{Model: fit.Model(set.Fit.Model), Fixed: set.Fit.Fixed, Confidence: set.Fit.Confidence, MaxHill: set.Fit.MaxHill,
		ActivityAlpha: set.Fit.ActivityAlpha, Window: set.Fit.PlateWindow(), MinEffect: set.Fit.MinEffect}
	var bs *fit.BootSettings
	if b := set.Fit.Bootstrap; b != nil {
		bs = &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval), Seed: *b.Seed}
	}
	// Progress is advisory: the fitting goroutines only count, and this
	// goroutine's ticker writes the count at most every 100 ms.
	var progress fit.Progress
	stopProgress := s.reportProgress(ctx, plateID, &progress, len(curves))
	start := time.Now()
	results, err := fit.FitBatch(ctx, curves, fs, bs, s.fitWorkers, &progress)
	stopProgress()
	if err != nil {
		if errors.Is(err, fit.ErrInvalidInput) {
			return s.failPlate(ctx, plateID, err)
		}
		return err // cancelled: River retries
	}
	out := make([]db.PlateCurve, len(results))
	for i, r := range results {
		var resamples, failed int
		if r.Boot != nil {
			resamples, failed = r.Boot.Resamples, r.Boot.Failed
		}
		s.obs.PlateCurveFitted(string(r.Model), r.Status, resamples, failed)
		pc := wire.PlateCurve{Key: specs[i].Key, CompoundID: specs[i].CompoundID, AntagonistID: specs[i].AntagonistID,
			AntagonistConc: specs[i].AntagonistConc, FitResult: wire.FromFit(r)}
		b, err := json.Marshal(pc)
		if err != nil {
			return fmt.Errorf("plate %s curve %s: %w", plateID, pc.Key, err)
		}
		out[i] = db.PlateCurve{Key: pc.Key, CompoundID: pc.CompoundID, AntagonistID: pc.AntagonistID,
			AntagonistConc: pc.AntagonistConc, Model: string(r.Model), Status: r.Status, Result: b,
			EngineVersion: fit.EngineVersion, Params: storedParams(r)}
		if r.Boot != nil {
			out[i].BootCols, out[i].BootDraws = len(r.Params), r.Boot.Draws
		}
		if r.HasPotency() {
			l := r.LogEC50().Estimate
			out[i].LogEC50 = &l
		}
	}
	runs, err := s.plateSchild(ctx, p, specs, set, bs)
	if err != nil {
		return err // cancelled: River retries
	}
	s.obs.PlateFitted(time.Since(start))
	if err := ctx.Err(); err != nil {
		return err
	}
	figures := &db.PlateQC{ZPrime: qc.ZPrime, SignalWindow: qc.SignalWindow,
		SignalToBackground: qc.SignalBackground, MaxMean: qc.MeanMax, MaxCV: qc.CV["max_control"], MinMean: qc.MeanMin,
		MinCV: qc.CV["min_control"], Pass: qc.Pass, Reasons: qc.Reasons}
	var assayRef string
	if p.AssayID != "" {
		a, err := s.store.Assay(ctx, p.AssayID)
		if err != nil {
			return fmt.Errorf("plate %s assay: %w", plateID, err)
		}
		assayRef = a.ReferenceCompoundID
	}
	figures.ReferencePEC50 = referencePEC50(assayRef, wells, out)
	// The plate joins its assay's drift charts in the transaction that
	// stores its results (planned from the stored series beforehand).
	drift, err := s.planDrift(ctx, p.AssayID, driftFigures(p, figures))
	if err != nil {
		return err
	}
	var news *driftNews
	err = s.store.Write(ctx, func(w db.Writer) error {
		if err := w.FinishPlate(ctx, plateID, db.PlateDone, qcJSON, out, ""); err != nil {
			return err
		}
		if err := w.SetPlateQC(ctx, plateID, figures); err != nil {
			return err
		}
		for _, r := range runs {
			// A retried job finds them stored: keep the first.
			if err := w.InsertSchildRun(ctx, r); err != nil && !errors.Is(err, db.ErrExists) {
				return err
			}
		}
		news, err = drift.record(ctx, w)
		return err
	})
	if err != nil {
		return err
	}
	s.observeDrift(news)
	// The plate's compounds are now stale in its assay's compound table:
	// summarise them here, off any request's path. A failure only leaves
	// them to the table's next read (the marks stay), so it is logged,
	// not retried.
	if p.AssayID != "" {
		if err := s.refreshPotency(ctx, p.AssayID); err != nil {
			s.log.Warn("refresh potency summaries", "plate", plateID, "assay", p.AssayID, "err", err)
		}
	}
	return nil
}

// failPlate marks a plate that cannot be fitted whatever the retries.
func (s *Service) failPlate(ctx context.Context, plateID string, cause error) error {
	err := s.store.Write(ctx, func(w db.Writer) error {
		return w.FinishPlate(ctx, plateID, db.PlateFailed, nil, nil, cause.Error())
	})
	if err != nil {
		return err
	}
	s.log.Warn("plate failed", "plate", plateID, "err", cause)
	return nil
}

// storedParams are a result's parameters as the store keeps them (NaN and
// ±Inf as nil).
func storedParams(r *fit.Result) []db.FitParam {
	finite := func(v float64) *float64 {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil
		}
		return &v
	}
	ps := make([]db.FitParam, len(r.Params))
	for i, p := range r.Params {
		ps[i] = db.FitParam{Name: p.Name, Estimate: finite(p.Estimate), SE: finite(p.SE), WaldLo: finite(p.WaldLo),
			WaldHi: finite(p.WaldHi), BootLo: finite(p.BootLo), BootHi: finite(p.BootHi), Fixed: p.Fixed, AtBound: p.AtBound}
	}
	return ps
}
