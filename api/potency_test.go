package api

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"strings"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
)

// hillFitBody is a noise-free Hill curve (bottom 0, top 100, slope 1) with
// its EC50 at 10^logEC50 M, sampled at 12 concentrations around it, plus
// extra fields.
func hillFitBody(logEC50 float64, extra string) string {
	var pts []string
	for k := range 12 {
		c := math.Pow(10, logEC50-2.75+0.5*float64(k))
		pts = append(pts, fmt.Sprintf(`{"conc":%.17g,"response":%.17g}`, c, fit.Hill.Value([]float64{0, 100, logEC50, 1}, c)))
	}
	return `{"model":"hill","conc_unit":"M","points":[` + strings.Join(pts, ",") + `]` + extra + `}`
}

// postJSON posts and decodes the answer, failing unless the status is want.
func postJSON(t *testing.T, ts *testServer, path, body string, want int, out any) {
	t.Helper()
	w := ts.do("POST", path, ScopeSubmit, body)
	if w.Code != want {
		t.Fatalf("POST %s: %d %s", path, w.Code, w.Body)
	}
	if out != nil {
		if err := json.Unmarshal(w.Body.Bytes(), out); err != nil {
			t.Fatal(err)
		}
	}
}

// getJSON gets and decodes, failing unless 200.
func getJSON(t *testing.T, ts *testServer, path string, out any) {
	t.Helper()
	w := ts.do("GET", path, ScopeRead, "")
	if w.Code != http.StatusOK {
		t.Fatalf("GET %s: %d %s", path, w.Code, w.Body)
	}
	if err := json.Unmarshal(w.Body.Bytes(), out); err != nil {
		t.Fatal(err)
	}
}

func catalogue(t *testing.T, ts *testServer, assay string, compounds ...string) {
	t.Helper()
	postJSON(t, ts, "/v1/assays", fmt.Sprintf(`{"id":%q,"name":"a"}`, assay), 201, nil)
	for _, c := range compounds {
		postJSON(t, ts, "/v1/compounds", fmt.Sprintf(`{"id":%q,"name":"c"}`, c), 201, nil)
	}
}

type historyOut struct {
	CompoundID string `json:"compound_id"`
	AssayID    string `json:"assay_id"`
	Runs       []struct {
		ID        string    `json:"id"`
		Kind      string    `json:"kind"`
		LogEC50   *float64  `json:"log_ec50"`
		Usable    bool      `json:"usable"`
		Excluded  string    `json:"excluded"`
		Measured  time.Time `json:"measured_at"`
		PlateID   string    `json:"plate_id"`
		Barcode   string    `json:"barcode"`
		RefitOf   string    `json:"refit_of"`
		Activity  string    `json:"activity"`
		Qualifier string    `json:"qualifier"`
	} `json:"runs"`
	Summary struct {
		N           int            `json:"n"`
		MeanLogEC50 *float64       `json:"mean_log_ec50"`
		SDLogEC50   *float64       `json:"sd_log_ec50"`
		GeoMeanEC50 *float64       `json:"geo_mean_ec50"`
		GeoMeanCI   [2]*float64    `json:"geo_mean_ci"`
		PEC50Mean   *float64       `json:"pec50_mean"`
		MSR         *float64       `json:"msr"`
		MSRRuns     int            `json:"msr_runs"`
		MSROverall  *float64       `json:"msr_overall"`
		Excluded    map[string]int `json:"excluded"`
	} `json:"summary"`
}

func near(t *testing.T, what string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil || math.Abs(*got-want) > tol {
		g := "null"
		if got != nil {
			g = fmt.Sprint(*got)
		}
		t.Errorf("%s = %s, want %v ± %g", what, g, want, tol)
	}
}

// FACTS §8 [C]: 1, 2 and 4 µM have the geometric mean 2 µM and the mean
// pEC50 5.698970, here through POST /v1/fits and the history. The fits
// recover the EC50s of noise-free curves to far better than the tolerance.
func TestPotencyGeoMeanFacts(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		catalogue(t, ts, "GM-A", "GM-C")
		for i, ec := range []float64{1e-6, 2e-6, 4e-6} {
			postJSON(t, ts, "/v1/fits", hillFitBody(math.Log10(ec),
				fmt.Sprintf(`,"assay_id":"GM-A","compound_id":"GM-C","measured_at":"2026-0%d-01T09:00:00Z"`, i+1)), 201, nil)
		}
		var h historyOut
		getJSON(t, ts, "/v1/compounds/GM-C/potency?assay_id=GM-A", &h)
		if h.Summary.N != 3 || len(h.Runs) != 3 {
			t.Fatalf("n %d, %d runs, want 3", h.Summary.N, len(h.Runs))
		}
		near(t, "geo_mean_ec50", h.Summary.GeoMeanEC50, 2e-6, 2e-6*1e-6)
		near(t, "pec50_mean", h.Summary.PEC50Mean, 5.698970, 1e-6)
		if h.Summary.MSR != nil {
			// s = log10(2) = 0.30103: MSR = 10^(2√2·s) with 3 runs.
			near(t, "msr", h.Summary.MSR, math.Pow(10, 2*math.Sqrt2*math.Log10(2)), 1e-6)
		} else {
			t.Error("msr is null with 3 usable runs")
		}
		for i, r := range h.Runs {
			if want := time.Date(2026, time.Month(i+1), 1, 9, 0, 0, 0, time.UTC); !r.Measured.Equal(want) {
				t.Errorf("run %d measured_at %v, want %v (the fit's measured_at, oldest first)", i, r.Measured, want)
			}
		}
	})
}

// FACTS §4 [DER]: the replicate-experiment example (MD −0.03, s_d
// 0.132162, MR 0.933254, MSR 1.837905, RL (0.769863, 1.131322), LsA
// (0.507782, 1.715233), to 1e-5) through POST /v1/msr-studies with curve
// pairs of stored fits, and the study read back by id.
func TestMSRStudyFacts(t *testing.T) {
	run1 := []float64{-6.10, -7.32, -5.85, -8.01, -6.72, -7.90, -5.40, -6.95, -7.45, -8.30}
	run2 := []float64{-6.02, -7.45, -5.70, -8.12, -6.60, -7.70, -5.52, -6.88, -7.30, -8.41}
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		var ids []string
		for i := range run1 {
			ids = append(ids, fmt.Sprintf("R-%02d", i))
		}
		catalogue(t, ts, "R-A", ids...)
		var pairs []string
		for i, c := range ids {
			extra := `,"assay_id":"R-A","compound_id":"` + c + `"`
			var a, b struct{ ID string }
			postJSON(t, ts, "/v1/fits", hillFitBody(run1[i], extra), 201, &a)
			postJSON(t, ts, "/v1/fits", hillFitBody(run2[i], extra), 201, &b)
			pairs = append(pairs, fmt.Sprintf(`{"run1":%q,"run2":%q}`, a.ID, b.ID))
		}
		type study struct {
			ID       string
			N        int
			MeanDiff *float64 `json:"mean_diff"`
			SDDiff   *float64 `json:"sd_diff"`
			MR, MSR  *float64
			RL       [2]*float64 `json:"rl"`
			LsA      [2]*float64 `json:"lsa"`
			Pass     bool
			Failed   []string
		}
		var s, back study
		w := ts.do("POST", "/v1/msr-studies", ScopeSubmit, `{"assay_id":"R-A","pairs":[`+strings.Join(pairs, ",")+`]}`)
		if w.Code != 201 {
			t.Fatalf("study: %d %s", w.Code, w.Body)
		}
		if err := json.Unmarshal(w.Body.Bytes(), &s); err != nil {
			t.Fatal(err)
		}
		if s.N != 10 || !s.Pass || len(s.Failed) != 0 {
			t.Errorf("n %d pass %v failed %v, want 10 true []", s.N, s.Pass, s.Failed)
		}
		near(t, "MD", s.MeanDiff, -0.03, 1e-5)
		near(t, "s_d", s.SDDiff, 0.132162, 1e-5)
		near(t, "MR", s.MR, 0.933254, 1e-5)
		near(t, "MSR", s.MSR, 1.837905, 1e-5)
		near(t, "RL lo", s.RL[0], 0.769863, 1e-5)
		near(t, "RL hi", s.RL[1], 1.131322, 1e-5)
		near(t, "LsA lo", s.LsA[0], 0.507782, 1e-5)
		near(t, "LsA hi", s.LsA[1], 1.715233, 1e-5)
		getJSON(t, ts, w.Header().Get("Location"), &back)
		if back.ID != s.ID || *back.MSR != *s.MSR {
			t.Errorf("read back %+v, want %+v", back, s)
		}
		// A pair of curves of two compounds is refused where it broke.
		var p0, p1 struct{ Run1, Run2 string }
		_ = json.Unmarshal([]byte(pairs[0]), &p0)
		_ = json.Unmarshal([]byte(pairs[1]), &p1)
		bad := fmt.Sprintf(`{"assay_id":"R-A","pairs":[{"run1":%q,"run2":%q},%s]}`, p0.Run1, p1.Run2, pairs[2])
		w = ts.do("POST", "/v1/msr-studies", ScopeSubmit, bad)
		if p := problemOf(t, w); w.Code != 422 || len(p.Errors) == 0 || p.Errors[0].Pointer != "/pairs/0/run2" {
			t.Errorf("mismatched pair: %d %+v", w.Code, p)
		}
	})
}

// A rejected curve leaves the summary; a refit supersedes its original; a
// history assembled from plates and single fits posted through the API
// returns the summary computed here from the stored estimates; nothing
// stored before changes.
func TestPotencyHistoryFromPlatesAndFits(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		startWorkers(t, ts)
		catalogue(t, ts, "H-A", "demo-cpd-205")
		var plates []string
		for k := range 3 {
			wells, _ := invented384(uint64(10 + k))
			body, err := json.Marshal(map[string]any{"barcode": fmt.Sprintf("H-%d", k), "format": 384, "wells": wells,
				"assay_id": "H-A", "conc_unit": "M", "measured_at": fmt.Sprintf("2026-03-0%dT08:00:00Z", k+1)})
			if err != nil {
				t.Fatal(err)
			}
			var acc struct {
				PlateID string `json:"plate_id"`
				Status  string
			}
			w := ts.do("POST", "/v1/plates?wait=60s", ScopeSubmit, string(body))
			if w.Code >= 300 {
				t.Fatalf("plate: %d %s", w.Code, w.Body)
			}
			if err := json.Unmarshal(w.Body.Bytes(), &acc); err != nil {
				t.Fatal(err)
			}
			if acc.Status != "done" {
				t.Fatalf("plate: %.600s", w.Body)
			}
			plates = append(plates, acc.PlateID)
		}
		// Each plate job summarises its compounds for the assay's table
		// itself, just after the plate is done: no read has to.
		for deadline := time.Now().Add(20 * time.Second); ; time.Sleep(20 * time.Millisecond) {
			stale, err := store.PotencyStale(context.Background(), "H-A")
			if err != nil {
				t.Fatal(err)
			}
			if !stale {
				break
			}
			if time.Now().After(deadline) {
				t.Fatal("20 s after the plate jobs the table still has stale summaries")
			}
		}
		var fits []string
		for k, l := range []float64{-7.4, -7.1, -7.3} {
			var f struct{ ID string }
			postJSON(t, ts, "/v1/fits", hillFitBody(l, fmt.Sprintf(`,"assay_id":"H-A","compound_id":"demo-cpd-205","measured_at":"2026-04-0%dT08:00:00Z"`, k+1)), 201, &f)
			fits = append(fits, f.ID)
		}
		before := ts.do("GET", "/v1/fits/"+fits[0], ScopeRead, "").Body.String()

		var h historyOut
		getJSON(t, ts, "/v1/compounds/demo-cpd-205/potency?assay_id=H-A", &h)
		if len(h.Runs) != 6 {
			t.Fatalf("%d runs, want 3 plate curves and 3 fits", len(h.Runs))
		}
		checkSummary(t, "all usable", &h, nil)
		// Every plate curve carries its potency record's id.
		var pv struct {
			Curves []struct {
				ID            string `json:"id"`
				CompoundID    string `json:"compound_id"`
				PlateQCFailed bool   `json:"plate_qc_failed"`
			} `json:"curves"`
		}
		getJSON(t, ts, "/v1/plates/"+plates[0], &pv)
		for _, c := range pv.Curves {
			if c.CompoundID == "demo-cpd-205" && c.ID != h.Runs[0].ID {
				t.Errorf("plate view curve id %q, history %q", c.ID, h.Runs[0].ID)
			}
		}
		if csv := ts.do("GET", "/v1/plates/"+plates[0]+"/curves.csv", ScopeRead, "").Body.String(); !strings.Contains(csv, h.Runs[0].ID) ||
			!strings.Contains(csv, "log_ec50_ci_lo,log_ec50_ci_hi,plate_qc,curve_id") {
			t.Errorf("curves.csv has no curve id or log interval:\n%.300s", csv)
		}
		for i, r := range h.Runs[:3] {
			if r.Kind != "plate_curve" || r.PlateID != plates[i] || r.Barcode != fmt.Sprintf("H-%d", i) {
				t.Errorf("run %d: %s %s %s, want the plate curve of %s", i, r.Kind, r.PlateID, r.Barcode, plates[i])
			}
		}

		// Reject the second fit: it leaves the summary.
		postJSON(t, ts, "/v1/curves/"+fits[1]+"/review", `{"decision":"rejected","reason":"tip clog"}`, 201, nil)
		h = historyOut{}
		getJSON(t, ts, "/v1/compounds/demo-cpd-205/potency?assay_id=H-A", &h)
		checkSummary(t, "one rejected", &h, map[string]string{fits[1]: "rejected"})
		if h.Summary.Excluded["rejected"] != 1 {
			t.Errorf("excluded %v, want rejected 1", h.Summary.Excluded)
		}
		// Accepting it again makes it usable: the latest event is the state.
		postJSON(t, ts, "/v1/curves/"+fits[1]+"/review", `{"decision":"accepted"}`, 201, nil)
		h = historyOut{}
		getJSON(t, ts, "/v1/compounds/demo-cpd-205/potency?assay_id=H-A&include=usable", &h)
		checkSummary(t, "accepted again", &h, nil)

		// Refit the first plate curve without one well: the original is
		// superseded, the refit counts.
		var refit struct {
			ID      string `json:"id"`
			RefitOf string `json:"refit_of"`
		}
		w := ts.do("POST", "/v1/curves/"+h.Runs[0].ID+"/refit", ScopeSubmit, `{"exclude":["f5"],"reason":"bubble"}`)
		if w.Code != 201 {
			t.Fatalf("refit: %d %s", w.Code, w.Body)
		}
		if err := json.Unmarshal(w.Body.Bytes(), &refit); err != nil {
			t.Fatal(err)
		}
		first := h.Runs[0].ID
		h = historyOut{}
		getJSON(t, ts, "/v1/compounds/demo-cpd-205/potency?assay_id=H-A", &h)
		checkSummary(t, "refitted", &h, map[string]string{first: "superseded"})
		if len(h.Runs) != 7 || h.Summary.Excluded["superseded"] != 1 {
			t.Errorf("%d runs, excluded %v: want 7 and superseded 1", len(h.Runs), h.Summary.Excluded)
		}
		// The plate refit's plot draws well F5 hollow, the others filled as
		// before.
		svgOld := ts.do("GET", "/v1/curves/"+first+"/plot.svg", ScopeRead, "").Body.String()
		svgNew := ts.do("GET", "/v1/curves/"+refit.ID+"/plot.svg", ScopeRead, "").Body.String()
		nOld, nNew := strings.Count(svgOld, `fill="#252525"/>`), strings.Count(svgNew, `fill="#252525"/>`)
		if hollow := strings.Count(svgNew, `<circle class="excluded"`); hollow != 1 || nNew != nOld-1 || nOld < 5 {
			t.Errorf("plate refit plot: %d filled and %d hollow points; the original has %d filled", nNew, hollow, nOld)
		}
		// A stored curve's plot is titled with its compound, not its ID.
		if !strings.Contains(svgNew, ">demo-cpd-205</text>") || strings.Contains(svgNew, "Curve "+refit.ID) {
			t.Errorf("the plate curve's plot is not titled demo-cpd-205")
		}
		if after := ts.do("GET", "/v1/fits/"+fits[0], ScopeRead, "").Body.String(); after != before {
			t.Errorf("a stored fit changed:\n%s\n%s", before, after)
		}
		// Without assay_id: one history per assay.
		var all struct {
			Assays []historyOut `json:"assays"`
		}
		getJSON(t, ts, "/v1/compounds/demo-cpd-205/potency", &all)
		if len(all.Assays) != 1 || all.Assays[0].Summary.N != h.Summary.N {
			t.Errorf("per assay: %+v", all.Assays)
		}
		// The compound table has the same summary.
		var tab struct {
			Compounds []struct {
				CompoundID string `json:"compound_id"`
				Summary    struct {
					N   int      `json:"n"`
					MSR *float64 `json:"msr"`
				} `json:"summary"`
			} `json:"compounds"`
		}
		getJSON(t, ts, "/v1/assays/H-A/potency", &tab)
		found := false
		for _, c := range tab.Compounds {
			if c.CompoundID == "demo-cpd-205" {
				found = true
				if c.Summary.N != h.Summary.N || !eqPtr(c.Summary.MSR, h.Summary.MSR) {
					t.Errorf("table row %+v, history n %d msr %v", c.Summary, h.Summary.N, h.Summary.MSR)
				}
			}
		}
		if !found || len(tab.Compounds) != 16 {
			t.Errorf("%d compounds in the table, demo-cpd-205 found %v; want the 16 of the plates", len(tab.Compounds), found)
		}
		csvw := ts.do("GET", "/v1/assays/H-A/potency?limit=2", ScopeRead, "", "Accept", "text/csv")
		if csvw.Code != 200 || !strings.HasPrefix(csvw.Header().Get("Content-Type"), "text/csv") || csvw.Header().Get("Sluice-Next-Cursor") == "" {
			t.Errorf("csv: %d %s %q", csvw.Code, csvw.Header().Get("Content-Type"), csvw.Header().Get("Sluice-Next-Cursor"))
		}
		// The plot draws every run, the excluded hollow with the reason.
		svg := ts.do("GET", "/v1/compounds/demo-cpd-205/potency.svg?assay_id=H-A", ScopeRead, "")
		if svg.Code != 200 || strings.Count(svg.Body.String(), `class="run`) != 7 || !strings.Contains(svg.Body.String(), "excluded: superseded") {
			t.Errorf("svg: %d, %d runs drawn", svg.Code, strings.Count(svg.Body.String(), `class="run`))
		}
	})
}

func eqPtr(a, b *float64) bool { return (a == nil && b == nil) || (a != nil && b != nil && *a == *b) }

// checkSummary recomputes the summary from the runs' stored log EC50s:
// usable runs are every run not named in excluded (by id → reason), each
// of which must carry that reason.
func checkSummary(t *testing.T, what string, h *historyOut, excluded map[string]string) {
	t.Helper()
	var logs []float64
	for _, r := range h.Runs {
		want := excluded[r.ID]
		if r.Excluded != want || r.Usable != (want == "") {
			t.Errorf("%s: run %s excluded %q usable %v, want %q", what, r.ID, r.Excluded, r.Usable, want)
		}
		if r.Usable {
			logs = append(logs, *r.LogEC50)
		}
	}
	n := float64(len(logs))
	m := 0.0
	for _, v := range logs {
		m += v
	}
	m /= n
	ss := 0.0
	for _, v := range logs {
		ss += (v - m) * (v - m)
	}
	sd := math.Sqrt(ss / (n - 1))
	if h.Summary.N != len(logs) {
		t.Fatalf("%s: n %d, want %d", what, h.Summary.N, len(logs))
	}
	near(t, what+": mean_log_ec50", h.Summary.MeanLogEC50, m, 1e-12)
	near(t, what+": sd_log_ec50", h.Summary.SDLogEC50, sd, 1e-12)
	near(t, what+": geo_mean_ec50", h.Summary.GeoMeanEC50, math.Pow(10, m), 1e-12*math.Pow(10, m))
	near(t, what+": pec50_mean", h.Summary.PEC50Mean, -m, 1e-12)
	// Production MSR (FACTS §4) over every usable run, and over the last 6.
	near(t, what+": msr_overall", h.Summary.MSROverall, math.Pow(10, 2*math.Sqrt2*sd), 1e-9)
}

// An excluded point really leaves the refit: its estimates and RSS are
// those of a fit of the remaining points; the old version stays as it was;
// leaving too few points is a 422 naming the rule.
func TestRefitExcludesPoints(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		id := storeFit(t, ts, `,"bootstrap":{"resamples":200,"seed":7}`)
		before := ts.do("GET", "/v1/fits/"+id, ScopeRead, "").Body.String()
		w := ts.do("POST", "/v1/curves/"+id+"/refit", ScopeSubmit, `{"exclude":[3, 10],"reason":"outliers"}`)
		if w.Code != 201 {
			t.Fatalf("refit: %d %s", w.Code, w.Body)
		}
		var refit struct {
			ID         string          `json:"id"`
			RefitOf    string          `json:"refit_of"`
			Exclusions []int           `json:"exclusions"`
			Result     json.RawMessage `json:"result"`
		}
		if err := json.Unmarshal(w.Body.Bytes(), &refit); err != nil {
			t.Fatal(err)
		}
		if refit.RefitOf != id || fmt.Sprint(refit.Exclusions) != "[3 10]" {
			t.Errorf("refit_of %q exclusions %v", refit.RefitOf, refit.Exclusions)
		}
		// The same points without 3 and 10, fitted directly with the same
		// settings and seed.
		var req map[string]any
		if err := json.Unmarshal([]byte(dnaseBody(t, `,"bootstrap":{"resamples":200,"seed":7},"store":false`)), &req); err != nil {
			t.Fatal(err)
		}
		pts := req["points"].([]any)
		req["points"] = append(append([]any{}, pts[:3]...), append(append([]any{}, pts[4:10]...), pts[11:]...)...)
		body, _ := json.Marshal(req)
		direct := ts.do("POST", "/v1/fits", ScopeSubmit, string(body))
		if direct.Code != 200 {
			t.Fatalf("direct: %d %s", direct.Code, direct.Body)
		}
		type est struct {
			Params map[string]struct {
				Estimate float64    `json:"estimate"`
				BootCI   [2]float64 `json:"boot_ci"`
			} `json:"params"`
			Stats struct {
				RSS float64 `json:"rss"`
				N   int     `json:"n"`
			} `json:"stats"`
		}
		var a, b est
		if err := json.Unmarshal(refit.Result, &a); err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(direct.Body.Bytes(), &b); err != nil {
			t.Fatal(err)
		}
		// The same computation on the same points: equal bit for bit.
		if a.Stats.RSS != b.Stats.RSS || a.Stats.N != 14 || fmt.Sprint(a.Params) != fmt.Sprint(b.Params) {
			t.Errorf("refit %+v\ndirect %+v", a, b)
		}
		if after := ts.do("GET", "/v1/fits/"+id, ScopeRead, "").Body.String(); after != before {
			t.Error("the refitted fit changed")
		}
		var old struct {
			Superseded bool `json:"superseded"`
		}
		getJSON(t, ts, "/v1/curves/"+id, &old)
		if !old.Superseded {
			t.Error("the old version is not marked superseded")
		}
		// The refit's plot draws the 14 points it fitted and the 2 it left
		// out hollow; the old version's plot draws all 16 filled.
		svg := ts.do("GET", "/v1/curves/"+refit.ID+"/plot.svg", ScopeRead, "").Body.String()
		if filled, hollow := strings.Count(svg, `fill="#252525"/>`), strings.Count(svg, `<circle class="excluded"`); filled != 14 || hollow != 2 {
			t.Errorf("refit plot: %d filled and %d hollow points, want 14 and 2", filled, hollow)
		}
		svg = ts.do("GET", "/v1/curves/"+id+"/plot.svg", ScopeRead, "").Body.String()
		if filled, hollow := strings.Count(svg, `fill="#252525"/>`), strings.Count(svg, `<circle class="excluded"`); filled != 16 || hollow != 0 {
			t.Errorf("original plot: %d filled and %d hollow points, want 16 and 0", filled, hollow)
		}
		// 16 points, 13 left out: 3 cannot fit 4 parameters.
		w = ts.do("POST", "/v1/curves/"+id+"/refit", ScopeSubmit, `{"exclude":[0,1,2,3,4,5,6,7,8,9,10,11,12],"reason":"x"}`)
		if p := problemOf(t, w); w.Code != 422 || len(p.Errors) == 0 || p.Errors[0].Pointer != "/exclude" || !strings.Contains(p.Detail, "needs more points than parameters") {
			t.Errorf("too few points: %d %+v", w.Code, p)
		}
		for _, c := range []struct{ body, pointer string }{
			{`{"exclude":[99],"reason":"x"}`, "/exclude/0"},
			{`{"exclude":["B3"],"reason":"x"}`, "/exclude/0"},
			{`{"exclude":[1]}`, "/reason"},
		} {
			w := ts.do("POST", "/v1/curves/"+id+"/refit", ScopeSubmit, c.body)
			if p := problemOf(t, w); w.Code != 422 || len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer {
				t.Errorf("%s: %d %+v, want 422 at %s", c.body, w.Code, p, c.pointer)
			}
		}
	})
}

// Review: a reason is required to reject; a decision must be one of two;
// an unknown curve is a 404; nothing is stored for a refused review.
func TestReviewRefusals(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		id := storeFit(t, ts, "")
		for _, c := range []struct {
			path, body string
			status     int
			pointer    string
		}{
			{"/v1/curves/" + id + "/review", `{"decision":"rejected"}`, 422, "/reason"},
			{"/v1/curves/" + id + "/review", `{"decision":"maybe","reason":"x"}`, 422, "/decision"},
			{"/v1/curves/nope/review", `{"decision":"accepted"}`, 404, ""},
		} {
			w := ts.do("POST", c.path, ScopeSubmit, c.body)
			p := problemOf(t, w)
			if w.Code != c.status || (c.pointer != "" && (len(p.Errors) == 0 || p.Errors[0].Pointer != c.pointer)) {
				t.Errorf("%s %s: %d %+v", c.path, c.body, w.Code, p)
			}
		}
		if n := audited("curve.review")(t, store); n != 0 {
			t.Errorf("%d reviews stored by refused requests", n)
		}
		if w := ts.do("POST", "/v1/curves/"+id+"/review", ScopeRead, `{"decision":"accepted"}`); w.Code != 403 {
			t.Errorf("read scope reviews: %d, want 403", w.Code)
		}
	})
}
