package service

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"testing"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/schild"
)

// A fit over the synchronous budget is stored as a queued analysis with
// its job and answered 202; its job stores the fit and the reply, once,
// and the analysis then gives the result the synchronous request would
// have had.
func TestQueuedFit(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		s, err := New(Deps{Store: store, Budget: Budget{Sync: 10_000}})
		if err != nil {
			t.Fatal(err)
		}
		ctx := context.Background()
		who := Caller{Name: "pipeline"}
		req := dnaseRequest(t)
		req.Bootstrap = &wire.BootstrapIn{Resamples: 100} // 8·4·(250 + 100·8 + 16·8) ≈ 38 000 units
		idem, err := NewIdem("q-1", "POST /v1/fits", nil, []byte("body"))
		if err != nil {
			t.Fatal(err)
		}
		r, err := s.Fit(ctx, who, idem, req, []byte("body"))
		if err != nil {
			t.Fatal(err)
		}
		var q wire.AnalysisQueued
		if err := json.Unmarshal(r.Body, &q); err != nil || r.Status != 202 || q.Status != "queued" || r.Location != "/v1/analyses/"+q.AnalysisID {
			t.Fatalf("%d %s (%v)", r.Status, r.Body, err)
		}
		if runs, _, _ := store.FitRuns(ctx, db.FitFilter{}); len(runs) != 0 {
			t.Fatalf("%d runs stored before the job ran", len(runs))
		}
		// A retry under the key replays the 202; nothing more is queued.
		again, err := s.Fit(ctx, who, idem, req, []byte("body"))
		if err != nil || !again.Replayed || string(again.Body) != string(r.Body) {
			t.Fatalf("retry: %v %+v", err, again)
		}
		j, err := store.Job(ctx, q.JobID)
		if err != nil || j.Kind != db.JobAnalysis || j.Analysis != "fit" || j.Target != q.AnalysisID {
			t.Fatalf("job %+v, %v", j, err)
		}
		if v, err := s.Job(ctx, q.JobID); err != nil || v.AnalysisID != q.AnalysisID || v.Status != "queued" {
			t.Fatalf("job view %+v, %v", v, err)
		}
		// The job, twice (a retried job): one fit.
		for range 2 {
			if err := s.RunAnalysis(ctx, j.Analysis, j.Target); err != nil {
				t.Fatal(err)
			}
		}
		runs, _, err := store.FitRuns(ctx, db.FitFilter{})
		if err != nil || len(runs) != 1 {
			t.Fatalf("%d runs (%v), want 1", len(runs), err)
		}
		a, err := s.Analysis(ctx, q.AnalysisID)
		if err != nil || a.Status != "done" || a.Location != "/v1/fits/"+runs[0].ID || string(a.Result) != string(runs[0].Result) {
			t.Fatalf("analysis %+v, %v", a, err)
		}
		var got wire.StoredFit
		if err := json.Unmarshal(a.Result, &got); err != nil || got.SubmittedBy != "pipeline" || got.Bootstrap == nil ||
			got.Bootstrap.Resamples != 100 || got.Status != "converged" {
			t.Errorf("result %s", a.Result)
		}
		res, err := s.AnalysisResult(ctx, q.AnalysisID)
		if err != nil || res.Status != 201 || string(res.Body) != string(runs[0].Result) {
			t.Errorf("result: %v %+v", err, res)
		}
	})
}

// A queued request the analysis refuses finishes as failed with the
// reason; a queued potential gives its reply byte for byte.
func TestQueuedPotential(t *testing.T) {
	store := dbtest.SQLite(t)
	s, err := New(Deps{Store: store, Budget: Budget{Sync: 1000}})
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	lo, h, pm := -5.0, 1.5, 0.8
	req := &wire.PotentialRequest{ConcUnit: "M", Hill: &wire.HillIn{LogEC50: &lo, Hill: &h, PoMax: &pm}, AgonistConc: floats(3e-5, 1e-6),
		Channel: wire.ChannelIn{Count: 200, ConductancePS: 50, ReversalMV: new(float64)}, Cell: wire.CellIn{Preset: "neuron"}}
	r, err := s.Potential(ctx, Caller{Name: "p"}, nil, req, true)
	if err != nil || r.Status != 202 {
		t.Fatalf("%v %+v", err, r)
	}
	var q wire.AnalysisQueued
	if err := json.Unmarshal(r.Body, &q); err != nil {
		t.Fatal(err)
	}
	if err := s.RunAnalysis(ctx, "potential", q.AnalysisID); err != nil {
		t.Fatal(err)
	}
	res, err := s.AnalysisResult(ctx, q.AnalysisID)
	if err != nil || res.ContentType != "image/svg+xml" || len(res.Body) == 0 {
		t.Fatalf("%v %+v", err, res)
	}
	sync, err := New(Deps{Store: store})
	if err != nil {
		t.Fatal(err)
	}
	direct, err := sync.Potential(ctx, Caller{Name: "p"}, nil, req, true)
	if err != nil || string(direct.Body) != string(res.Body) {
		t.Errorf("the queued reply differs from the synchronous one (%v)", err)
	}
	if a, err := s.Analysis(ctx, q.AnalysisID); err != nil || a.Result != nil || a.ResultURL == "" {
		t.Errorf("an SVG result is given by URL: %+v %v", a, err)
	}
	// Refused when it runs (here: a stored request edited to be invalid).
	if err := store.Write(ctx, func(w db.Writer) error {
		job, err := w.EnqueueAnalysis(ctx, "potential", "bad", db.JobOpts{})
		if err != nil {
			return err
		}
		return w.InsertAnalysis(ctx, &db.Analysis{ID: "bad", Kind: "potential", SubmittedBy: "p", JobID: job,
			Request: []byte(`{"potential":{"agonist_conc":[]}}`)})
	}); err != nil {
		t.Fatal(err)
	}
	if err := s.RunAnalysis(ctx, "potential", "bad"); err != nil {
		t.Fatal(err)
	}
	if a, err := s.Analysis(ctx, "bad"); err != nil || a.Status != "failed" || a.Error == "" {
		t.Errorf("refused analysis: %+v %v", a, err)
	}
}

// A queued operational analysis gives, once its job has run, the reply
// the synchronous request gives.
func TestQueuedOperational(t *testing.T) {
	store := dbtest.SQLite(t)
	queued, err := New(Deps{Store: store, Budget: Budget{Sync: 1}})
	if err != nil {
		t.Fatal(err)
	}
	sync := newTestService(t, store)
	ctx := context.Background()
	var ref, part []wire.PointIn
	for k := 0; k < 12; k++ {
		a := 1e-9 * math.Pow(10, 0.5*float64(k))
		r, p := fit.Hill.Value([]float64{0, 100, -7, 1}, a), schild.Operational(100, 2e-6, 1.5, 1, a)
		ref = append(ref, wire.PointIn{Conc: &a, Response: &r})
		part = append(part, wire.PointIn{Conc: &a, Response: &p})
	}
	req := &wire.OperationalRequest{ConcUnit: "M", Reference: ref, Partial: part}
	r, err := queued.Operational(ctx, Caller{Name: "p"}, nil, req)
	if err != nil || r.Status != 202 {
		t.Fatalf("%v %+v", err, r)
	}
	var q wire.AnalysisQueued
	if err := json.Unmarshal(r.Body, &q); err != nil {
		t.Fatal(err)
	}
	if err := queued.RunAnalysis(ctx, "operational", q.AnalysisID); err != nil {
		t.Fatal(err)
	}
	got, err := queued.AnalysisResult(ctx, q.AnalysisID)
	if err != nil {
		t.Fatal(err)
	}
	want, err := sync.Operational(ctx, Caller{Name: "p"}, nil, req)
	if err != nil || want.Status != 200 || string(got.Body) != string(want.Body) {
		t.Errorf("queued %s\nsynchronous %s (%v)", got.Body, want.Body, err)
	}
	req.Confidence = 1.5
	if _, err := sync.Operational(ctx, Caller{}, nil, req); !errors.Is(err, ErrInvalid) {
		t.Errorf("confidence 1.5: %v", err)
	}
}
