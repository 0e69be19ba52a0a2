package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/potency"
)

// PotencyQuery is GET /v1/compounds/{id}/potency.
type PotencyQuery struct {
	CompoundID string
	AssayID    string    // "" answers per assay
	From, To   time.Time // measured_at in [From, To); zero does not bound
	// All lists every run; false lists only the usable ones. The summary
	// is over the usable runs either way.
	All bool
	// MSRWindow is the production MSR's window; 0 means
	// potency.DefaultMSRWindow (6), otherwise ≥ 3.
	MSRWindow int
}

// Potency is a compound's potency history: its curves, single fits and
// plate curves alike, oldest experiment first, and the summary over the
// usable ones (fit/potency.Summarize). Without an assay it answers per
// assay.
func (s *Service) Potency(ctx context.Context, q PotencyQuery) (*wire.CompoundPotency, error) {
	set := &potency.HistorySettings{MSRWindow: q.MSRWindow}
	if q.MSRWindow != 0 && q.MSRWindow < potency.MinMSRRuns {
		return nil, BadParameter("msr_window", "%d is below the %d runs an MSR needs", q.MSRWindow, potency.MinMSRRuns)
	}
	if _, err := s.store.Compound(ctx, q.CompoundID); err != nil {
		return nil, err
	}
	if q.AssayID != "" {
		if _, err := s.store.Assay(ctx, q.AssayID); errors.Is(err, db.ErrNotFound) {
			return nil, BadParameter("assay_id", "no assay with id %q", q.AssayID)
		} else if err != nil {
			return nil, err
		}
	}
	rows, err := s.store.CompoundPotency(ctx, db.PotencyFilter{CompoundID: q.CompoundID, AssayID: q.AssayID, From: q.From, To: q.To})
	if err != nil {
		return nil, err
	}
	reviews, err := s.latestReviews(ctx, rows)
	if err != nil {
		return nil, err
	}
	out := &wire.CompoundPotency{CompoundID: q.CompoundID, Assays: []wire.PotencyHistory{}, Caution: wire.Caution}
	byAssay := map[string][]db.PotencyRow{}
	var order []string
	for _, r := range rows {
		if _, ok := byAssay[r.AssayID]; !ok {
			order = append(order, r.AssayID)
		}
		byAssay[r.AssayID] = append(byAssay[r.AssayID], r)
	}
	if q.AssayID != "" && len(order) == 0 {
		order = []string{q.AssayID}
	}
	slices.Sort(order)
	for _, a := range order {
		h, err := history(q.CompoundID, a, byAssay[a], reviews, set, q.All)
		if err != nil {
			return nil, err
		}
		out.Assays = append(out.Assays, *h)
	}
	return out, nil
}

// latestReviews returns each curve's latest review event.
func (s *Service) latestReviews(ctx context.Context, rows []db.PotencyRow) (map[string]db.Review, error) {
	ids := make([]string, len(rows))
	for i, r := range rows {
		ids[i] = r.ID
	}
	evs, err := s.store.Reviews(ctx, ids)
	if err != nil {
		return nil, err
	}
	latest := make(map[string]db.Review, len(evs))
	for _, e := range evs { // oldest first per curve: the last one wins
		latest[e.CurveID] = e
	}
	return latest, nil
}

// history builds one assay's history of a compound from its rows (oldest
// experiment first).
func history(compoundID, assayID string, rows []db.PotencyRow, reviews map[string]db.Review, set *potency.HistorySettings, all bool) (*wire.PotencyHistory, error) {
	runs := make([]potency.Run, len(rows))
	recs := make([]wire.PotencyRecord, len(rows))
	for i, r := range rows {
		rec, run, err := record(r, reviews)
		if err != nil {
			return nil, err
		}
		recs[i], runs[i] = rec, run
	}
	h, err := potency.Summarize(runs, set)
	if err != nil {
		return nil, fmt.Errorf("history of %s in %s: %w", compoundID, assayID, err)
	}
	out := &wire.PotencyHistory{CompoundID: compoundID, AssayID: assayID, Runs: []wire.PotencyRecord{}, Summary: summaryOf(h)}
	for i := range recs {
		recs[i].Usable = h.Reasons[i] == potency.Usable
		recs[i].Excluded = string(h.Reasons[i])
		if all || recs[i].Usable {
			out.Runs = append(out.Runs, recs[i])
		}
	}
	return out, nil
}

// record is a stored curve as a potency record and as a potency.Run.
func record(r db.PotencyRow, reviews map[string]db.Review) (wire.PotencyRecord, potency.Run, error) {
	act, qual, flags, err := callOf(r)
	if err != nil {
		return wire.PotencyRecord{}, potency.Run{}, fmt.Errorf("curve %s: %w", r.ID, err)
	}
	rec := wire.PotencyRecord{ID: r.ID, Kind: r.Kind, AssayID: r.AssayID, CompoundID: r.CompoundID,
		MeasuredAt: r.MeasuredAt.Format(time.RFC3339Nano), PlateID: r.PlateID, Barcode: r.Barcode,
		LogEC50: num(r.LogEC50.Value), LogEC50CI: [2]wire.Num{num(r.LogEC50.Lo), num(r.LogEC50.Hi)},
		Status: r.Status, Activity: string(act), Qualifier: string(qual), Flags: flags,
		PlateQCFailed: r.PlateQCPass != nil && !*r.PlateQCPass, RefitOf: r.RefitOf, Superseded: r.Superseded}
	rec.PEC50 = -rec.LogEC50
	run := potency.Run{LogEC50: float64(rec.LogEC50), Activity: act, Qualifier: qual, Superseded: r.Superseded,
		PlateQCFailed: rec.PlateQCFailed, MeasuredAt: r.MeasuredAt}
	if e, ok := reviews[r.ID]; ok {
		rec.Review = reviewOut(e)
		run.Rejected = e.Decision == db.ReviewRejected
	}
	return rec, run, nil
}

// callOf reads a curve's activity call, qualifier and flags from its
// stored result object (wire.FitResult: "activity", "qualifier", "flags").
// A result stored before the engine made activity calls (no "activity")
// has no call, and so does an active curve without a qualifier or a log
// EC50: both count as inconclusive, so that a run nobody called never
// enters a summary.
func callOf(r db.PotencyRow) (potency.Activity, potency.Qualifier, []string, error) {
	var doc struct {
		Activity  string   `json:"activity"`
		Qualifier *string  `json:"qualifier"`
		Flags     []string `json:"flags"`
	}
	if err := json.Unmarshal(r.Result, &doc); err != nil {
		return "", "", nil, fmt.Errorf("result document: %w", err)
	}
	if doc.Flags == nil {
		doc.Flags = []string{}
	}
	act := potency.Activity(doc.Activity)
	var qual potency.Qualifier
	if doc.Qualifier != nil {
		qual = potency.Qualifier(*doc.Qualifier)
	}
	switch act {
	case potency.Active:
		if qual == "" || r.LogEC50.Value == nil {
			return potency.Inconclusive, qual, doc.Flags, nil
		}
	case potency.Inactive, potency.Inconclusive:
	default:
		return potency.Inconclusive, qual, doc.Flags, nil
	}
	return act, qual, doc.Flags, nil
}

func reviewOut(e db.Review) *wire.ReviewEvent {
	return &wire.ReviewEvent{ID: e.ID, CurveID: e.CurveID, Decision: e.Decision, Reason: e.Reason, By: e.Actor,
		At: e.At.Format(time.RFC3339Nano)}
}

// summaryOf is a history's summary as the API shows it.
func summaryOf(h *potency.History) wire.PotencySummary {
	e := h.Excluded
	return wire.PotencySummary{N: h.N, MeanLogEC50: wire.Num(h.Log.Mean), SDLogEC50: wire.Num(h.Log.SD),
		GeoMeanEC50: wire.Num(h.GeoMeanEC50), GeoMeanCI: [2]wire.Num{wire.Num(h.GeoMeanCI.Lo), wire.Num(h.GeoMeanCI.Hi)},
		Confidence: wire.Num(h.Settings.Confidence), PEC50Mean: wire.Num(h.PEC50Mean),
		MSR: wire.Num(h.MSR), MSRWindow: h.Settings.MSRWindow, MSRRuns: h.MSRRuns, MSROverall: wire.Num(h.MSROverall),
		Excluded: map[string]int{
			string(potency.ReasonSuperseded): e.Superseded, string(potency.ReasonRejected): e.Rejected,
			string(potency.ReasonPlateQCFailed): e.PlateQCFailed, string(potency.ReasonInactive): e.Inactive,
			string(potency.ReasonInconclusive): e.Inconclusive, string(potency.ReasonQualified): e.Qualified,
		}}
}

// num is a stored estimate as a wire number (NULL is NaN, encoded null).
func num(v *float64) wire.Num {
	if v == nil {
		return wire.Num(math.NaN())
	}
	return wire.Num(*v)
}

// classify is why a single run would be left out of a history, "" when
// usable (the default settings: failed plates excluded).
func classify(r potency.Run) string {
	return string(potency.Classify(r, false))
}
