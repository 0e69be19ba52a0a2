package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strconv"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/plate"
)

// Plate is GET /v1/plates/{id}: the plate, its job's progress, its QC and,
// once done, its curves and Schild analyses.
func (s *Service) Plate(ctx context.Context, id string) (*wire.PlateView, error) {
	p, err := s.store.Plate(ctx, id)
	if err != nil {
		return nil, err // db's error names the plate
	}
	v := &wire.PlateView{PlateID: p.ID, Barcode: p.Barcode, Format: p.Format, AssayID: p.AssayID, Mode: p.Mode, Status: p.Status,
		JobID: p.JobID, Progress: wire.Progress{Done: p.CurvesDone, Total: p.CurvesTotal}, QC: p.QC, Error: p.Error,
		Caution: wire.Caution, Curves: []json.RawMessage{}}
	if p.MeasuredAt != nil {
		v.MeasuredAt = p.MeasuredAt.Format(time.RFC3339)
	}
	if v.QC == nil {
		v.QC = json.RawMessage("null")
	}
	if p.Status != db.PlateDone {
		return v, nil
	}
	cs, err := s.store.PlateCurves(ctx, id)
	if err != nil {
		return nil, fmt.Errorf("curves of plate %s: %w", id, err)
	}
	for _, cv := range cs {
		if isRefit(cv.Key) {
			continue // a later version of a curve; GET /v1/curves/{id} has it
		}
		v.Curves = append(v.Curves, withCurveID(cv.Result, cv.ID, plateQCFailed(p)))
	}
	runs, err := s.store.PlateSchildRuns(ctx, id)
	if err != nil {
		return nil, fmt.Errorf("Schild runs of plate %s: %w", id, err)
	}
	for _, r := range runs {
		v.Schild = append(v.Schild, r.Result)
	}
	return v, nil
}

// PlateCurves is GET /v1/plates/{id}/curves.csv: the plate and its curves,
// by key.
func (s *Service) PlateCurves(ctx context.Context, id string) (*db.Plate, []wire.PlateCurve, error) {
	p, err := s.store.Plate(ctx, id)
	if err != nil {
		return nil, nil, err // db's error names the plate
	}
	cs, err := s.store.PlateCurves(ctx, p.ID)
	if err != nil {
		return nil, nil, fmt.Errorf("curves of plate %s: %w", id, err)
	}
	out := make([]wire.PlateCurve, len(cs))
	for i, cv := range cs {
		if err := json.Unmarshal(cv.Result, &out[i]); err != nil {
			return nil, nil, fmt.Errorf("stored curve %s of plate %s: %w", cv.Key, id, err)
		}
		out[i].ID, out[i].PlateQCFailed = cv.ID, plateQCFailed(p)
	}
	out = slices.DeleteFunc(out, func(c wire.PlateCurve) bool { return isRefit(c.Key) })
	return p, out, nil
}

// PlateMap is what a plate heat map shows: the plate, its format, its
// wells and its QC (nil until assessed).
type PlateMap struct {
	Plate  *db.Plate
	Format plate.Format
	Wells  []db.WellRow
	QC     *wire.PlateQC
}

// PlateMap is GET /v1/plates/{id}/heatmap.svg's data.
func (s *Service) PlateMap(ctx context.Context, id string) (*PlateMap, error) {
	p, err := s.store.Plate(ctx, id)
	if err != nil {
		return nil, err // db's error names the plate
	}
	rows, err := s.store.Wells(ctx, p.ID)
	if err != nil {
		return nil, fmt.Errorf("wells of plate %s: %w", id, err)
	}
	f, err := plate.ParseFormat(strconv.Itoa(p.Format))
	if err != nil {
		return nil, fmt.Errorf("stored plate %s: %w", id, err)
	}
	m := &PlateMap{Plate: p, Format: f, Wells: rows}
	if p.QC != nil {
		m.QC = &wire.PlateQC{}
		if err := json.Unmarshal(p.QC, m.QC); err != nil {
			return nil, fmt.Errorf("stored QC of plate %s: %w", id, err)
		}
	}
	return m, nil
}

// Job is GET /v1/jobs/{id}: a job's status (db.JobStatus), attempt and
// last error, and for a plate job its plate and progress.
func (s *Service) Job(ctx context.Context, id int64) (*wire.JobView, error) {
	j, err := s.store.Job(ctx, id)
	if err != nil {
		return nil, err // db's error names the job
	}
	p, err := s.store.PlateByJob(ctx, id)
	switch {
	case errors.Is(err, db.ErrNotFound):
		p = nil // a job without a plate
	case err != nil:
		return nil, fmt.Errorf("plate of job %d: %w", id, err)
	}
	v := &wire.JobView{ID: id, Attempt: j.Attempt}
	if j.Kind == db.JobAnalysis {
		v.AnalysisID = j.Target
	}
	if p != nil {
		v.PlateID, v.Progress = p.ID, wire.Progress{Done: p.CurvesDone, Total: p.CurvesTotal}
	}
	v.Status, v.Error = db.JobStatus(j, p)
	return v, nil
}
