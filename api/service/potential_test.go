package service

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"os"
	"strconv"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// dnaseRequest is R's DNase run 1 as a fit request (concentrations in the
// dataset's own units, read as molar here: only the shape matters).
func dnaseRequest(t *testing.T) *wire.FitRequest {
	t.Helper()
	f, err := os.Open("../../testdata/r-datasets/DNase.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	req := &wire.FitRequest{ConcUnit: "M", Model: "hill"}
	for _, r := range recs[1:] {
		if r[0] != "1" {
			continue
		}
		c, err1 := strconv.ParseFloat(r[1], 64)
		y, err2 := strconv.ParseFloat(r[2], 64)
		if err := errors.Join(err1, err2); err != nil {
			t.Fatal(err)
		}
		req.Points = append(req.Points, wire.PointIn{Conc: &c, Response: &y})
	}
	return req
}

// The potential band of a stored fit comes from the draws stored with it;
// a fit stored without draws (before they were stored) gets the same band
// from its regenerated draws, bit for bit, since the draws depend only on
// the data, settings and seed.
func TestPotentialBandFromStoredDraws(t *testing.T) {
	store := dbtest.SQLite(t)
	s := newTestService(t, store)
	ctx := context.Background()
	who := Caller{Name: "test"}
	req := dnaseRequest(t)
	seed := uint64(4)
	req.Bootstrap = &wire.BootstrapIn{Resamples: 200, Seed: &seed} // BCa: the regeneration skips its jackknife
	r, err := s.Fit(ctx, who, nil, req, []byte("raw"))
	if err != nil {
		t.Fatal(err)
	}
	var stored wire.StoredFit
	if err := json.Unmarshal(r.Body, &stored); err != nil {
		t.Fatal(err)
	}
	run, err := store.FitRun(ctx, stored.ID)
	if err != nil {
		t.Fatal(err)
	}
	if run.BootCols != 4 || len(run.BootDraws) != 200*4 {
		t.Fatalf("stored %d draws of %d columns, want 200 of 4", len(run.BootDraws)/max(run.BootCols, 1), run.BootCols)
	}
	// The same run as stored before draws were kept.
	old := *run
	old.ID, old.BootCols, old.BootDraws = "without-draws", 0, nil
	if err := store.Write(ctx, func(w db.Writer) error { return w.InsertFitRun(ctx, &old) }); err != nil {
		t.Fatal(err)
	}
	potential := func(id string) *Reply {
		t.Helper()
		pm := 0.7
		req := &wire.PotentialRequest{ConcUnit: "M", CurveID: id, PoMax: &pm, AgonistConc: floats(1, 4.5, 20),
			Channel: wire.ChannelIn{Count: 200, ConductancePS: 50, ReversalMV: new(float64)}, Cell: wire.CellIn{Preset: "neuron"}}
		r, err := s.Potential(ctx, who, nil, req, false)
		if err != nil {
			t.Fatal(err)
		}
		return r
	}
	a, b := potential(stored.ID), potential("without-draws")
	if string(a.Body) != string(b.Body) {
		t.Errorf("stored draws and regenerated draws differ:\n%s\n%s", a.Body, b.Body)
	}
	var out wire.PotentialResponse
	if err := json.Unmarshal(a.Body, &out); err != nil {
		t.Fatal(err)
	}
	for _, p := range out.Points {
		if p.CI == nil || !(p.CI.VMV[0] <= p.VMV && p.VMV <= p.CI.VMV[1]) || p.CI.VMV[0] == p.CI.VMV[1] {
			t.Errorf("point %+v ci %+v", p, p.CI)
		}
	}
}

// Work over the hard limit is refused before it runs, naming the field
// that drives it.
func TestHardLimit(t *testing.T) {
	store := dbtest.SQLite(t)
	s, err := New(Deps{Store: store, Budget: Budget{Sync: 100_000, Hard: 100_000}})
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	req := dnaseRequest(t) // 8 levels, 4 parameters: 8·4·250 = 8 000 units without a bootstrap
	if _, err := s.Fit(ctx, Caller{}, nil, req, nil); err != nil {
		t.Fatalf("under the limit: %v", err)
	}
	req.Bootstrap = &wire.BootstrapIn{Resamples: 1000}
	_, err = s.Fit(ctx, Caller{}, nil, req, nil)
	var e *Error
	if !errors.As(err, &e) || !errors.Is(err, ErrTooMuchWork) || e.Fields[0].Pointer != "/bootstrap/resamples" {
		t.Errorf("B = 1000 over the limit: %v", err)
	}
	pts := req.Points
	for i := range 500 {
		c, y := float64(i+1), float64(i)
		pts = append(pts, wire.PointIn{Conc: &c, Response: &y})
	}
	_, err = s.Fit(ctx, Caller{}, nil, &wire.FitRequest{ConcUnit: "M", Model: "hill", Points: pts}, nil)
	if !errors.As(err, &e) || !errors.Is(err, ErrTooMuchWork) || e.Fields[0].Pointer != "/points" {
		t.Errorf("500 levels over the limit: %v", err)
	}
	if runs, _, err := store.FitRuns(ctx, db.FitFilter{}); err != nil || len(runs) != 1 {
		t.Errorf("%d runs stored (%v), want the one under the limit", len(runs), err)
	}
}

// floats gives pointers to vs, as agonist_conc holds them.
func floats(vs ...float64) []*float64 {
	ps := make([]*float64, len(vs))
	for i := range vs {
		ps[i] = &vs[i]
	}
	return ps
}
