package api

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"sort"
	"strconv"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/plate"
	"sluice/fit/schild"
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
	fs := &fit.Settings{Model: fit.Model(set.Fit.Model), Fixed: set.Fit.Fixed, Confidence: set.Fit.Confidence, MaxHill: set.Fit.MaxHill}
	var bs *fit.BootSettings
	if b := set.Fit.Bootstrap; b != nil {
		bs = &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme), Interval: fit.Interval(b.Interval), Seed: *b.Seed}
	}
	// Progress is advisory: the fitting goroutines only count, and this
	// goroutine's ticker writes the count at most every 100 ms.
	var progress fit.Progress
	stopProgress := s.reportProgress(ctx, plateID, &progress, len(curves))
	start := time.Now()
	results, err := fit.FitBatch(ctx, curves, fs, bs, s.cfg.FitWorkers, &progress)
	stopProgress()
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
	s.metrics.plateDuration.Observe(time.Since(start).Seconds())
	if err := ctx.Err(); err != nil {
		return err
	}
	return s.store.Write(ctx, func(w db.Writer) error {
		if err := w.FinishPlate(ctx, plateID, db.PlateDone, qcJSON, out, ""); err != nil {
			return err
		}
		if err := w.SetPlateQC(ctx, plateID, &db.PlateQC{ZPrime: qc.ZPrime, SignalWindow: qc.SignalWindow,
			SignalToBackground: qc.SignalBackground, MaxMean: qc.MeanMax, MaxCV: qc.CV["max_control"], MinMean: qc.MeanMin,
			MinCV: qc.CV["min_control"], Pass: qc.Pass, Reasons: qc.Reasons}); err != nil {
			return err
		}
		for _, r := range runs {
			// A retried job finds them stored: keep the first.
			if err := w.InsertSchildRun(ctx, r); err != nil && !errors.Is(err, db.ErrExists) {
				return err
			}
		}
		return nil
	})
}

// plateSchild runs a Schild analysis for every agonist/antagonist pair on
// the plate: the agonist's curves at each antagonist concentration, with
// its curve without antagonist (or at antagonist concentration 0) as the
// control. IDs are derived from the plate, so a retried job makes the same.
func (s *Server) plateSchild(ctx context.Context, p *db.Plate, specs []plate.CurveSpec, set plateSettings, bs *fit.BootSettings) ([]*db.SchildRun, error) {
	type pair struct{ agonist, antagonist string }
	groups := map[pair][]schild.Curve{}
	controls := map[string]fit.Curve{}
	for _, cs := range specs {
		if cs.AntagonistID == "" {
			controls[cs.CompoundID] = cs.Curve
			continue
		}
		k := pair{cs.CompoundID, cs.AntagonistID}
		groups[k] = append(groups[k], schild.Curve{AntagonistConc: cs.AntagonistConc, Points: cs.Curve.Points})
	}
	var keys []pair
	for k := range groups {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(a, b int) bool {
		return keys[a].agonist+"\x00"+keys[a].antagonist < keys[b].agonist+"\x00"+keys[b].antagonist
	})
	var runs []*db.SchildRun
	for _, k := range keys {
		curves := groups[k]
		hasControl := false
		for _, c := range curves {
			hasControl = hasControl || c.AntagonistConc == 0
		}
		if !hasControl {
			ctl, ok := controls[k.agonist]
			if !ok {
				continue
			}
			curves = append([]schild.Curve{{AntagonistConc: 0, Points: ctl.Points}}, curves...)
		}
		sset := &schild.Settings{Confidence: set.Fit.Confidence, Workers: s.cfg.FitWorkers}
		if bs != nil {
			sset.Resamples, sset.Seed = bs.Resamples, bs.Seed
			if sset.Resamples == 0 {
				sset.Resamples = fit.DefaultResamples
			}
		}
		res, err := schild.Analyze(ctx, curves, sset)
		if ctx.Err() != nil {
			return nil, fmt.Errorf("plate %s schild: %w", p.ID, ctx.Err())
		}
		if err != nil {
			s.log.Warn("plate schild", "plate", p.ID, "agonist", k.agonist, "antagonist", k.antagonist, "err", err)
			continue
		}
		out := wire.FromSchild(res, curves, sset.Seed)
		out.ID = p.ID + ":" + k.agonist + ":" + k.antagonist
		out.PlateID, out.AgonistID, out.AntagonistID = p.ID, k.agonist, k.antagonist
		out.CreatedAt = s.now().Format(time.RFC3339Nano)
		b, err := json.Marshal(out)
		if err != nil {
			return nil, fmt.Errorf("plate %s Schild %s: %w", p.ID, out.ID, err)
		}
		in, err := json.Marshal(map[string]any{"plate_id": p.ID, "agonist_id": k.agonist, "antagonist_id": k.antagonist})
		if err != nil {
			return nil, fmt.Errorf("plate %s Schild %s input: %w", p.ID, out.ID, err)
		}
		runs = append(runs, &db.SchildRun{ID: out.ID, CreatedAt: s.now(), SubmittedBy: p.SubmittedBy, PlateID: p.ID,
			AgonistID: k.agonist, AntagonistID: k.antagonist, EngineVersion: fit.EngineVersion, InputSHA256: p.InputSHA256,
			Input: in, Result: b})
	}
	return runs, nil
}

// reportProgress writes the curves counted in progress to the plate every
// 100 ms from its own goroutine, until the returned function is called; that
// function returns once the goroutine has ended.
func (s *Server) reportProgress(ctx context.Context, plateID string, progress *fit.Progress, total int) (stop func()) {
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

// setProgress records a running plate's progress. It is advisory: a
// failure is logged, and the job goes on.
func (s *Server) setProgress(ctx context.Context, plateID string, done, total int) {
	if err := s.store.SetPlateProgress(ctx, plateID, db.PlateRunning, done, total); err != nil && ctx.Err() == nil {
		s.log.Warn("plate progress", "plate", plateID, "err", err)
	}
}
