package api

import (
	"context"
	"encoding/json"
	"fmt"
	"net/url"
	"slices"
	"strings"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// tableRow is a row of GET /v1/assays/{id}/potency with its summary kept
// as sent, for comparison with the compound's own history.
type tableRow struct {
	CompoundID string          `json:"compound_id"`
	Runs       int             `json:"runs"`
	Summary    json.RawMessage `json:"summary"`
}

// walkTable reads every page of the compound table for a query and
// returns the rows in order; it fails on a page over limit or a cursor
// that does not advance.
func walkTable(t *testing.T, ts *testServer, assay, query string, limit int) []tableRow {
	t.Helper()
	var all []tableRow
	cursor := ""
	for range 100 {
		path := fmt.Sprintf("/v1/assays/%s/potency?limit=%d%s", assay, limit, query)
		if cursor != "" {
			path += "&cursor=" + url.QueryEscape(cursor)
		}
		var page struct {
			Compounds  []tableRow `json:"compounds"`
			NextCursor string     `json:"next_cursor"`
		}
		getJSON(t, ts, path, &page)
		if len(page.Compounds) > limit {
			t.Fatalf("%s: %d rows, limit %d", path, len(page.Compounds), limit)
		}
		all = append(all, page.Compounds...)
		if page.NextCursor == "" {
			return all
		}
		if page.NextCursor == cursor {
			t.Fatalf("%s: the cursor does not advance", path)
		}
		cursor = page.NextCursor
	}
	t.Fatal("more than 100 pages")
	return nil
}

// The compound table sorts by each summary key both ways and pages
// through it with cursors that carry the key: the order equals one
// computed here from each compound's own history (GET
// /v1/compounds/{id}/potency), NULLs last in either direction, ties by
// compound ID; every row's summary is the history's, byte for byte. The
// stored summaries follow reviews and refits at once (both engines).
func TestAssayTableSortsAndFollowsWrites(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		// Log EC50s of each compound's single fits (noise-free curves, so
		// the fits return them): C-1 and C-4 tie on every key; C-5 and
		// C-6 have one run each (no MSR, so NULLs to order); C-7 has four.
		runs := map[string][]float64{
			"C-1": {-7.0, -7.2, -7.4},
			"C-2": {-6.0, -6.1, -6.5},
			"C-3": {-8.0, -7.9, -8.2},
			"C-4": {-7.0, -7.2, -7.4},
			"C-5": {-5.5},
			"C-6": {-9.0},
			"C-7": {-6.8, -6.9, -7.6, -7.0},
		}
		var ids []string
		for id := range runs {
			ids = append(ids, id)
		}
		slices.Sort(ids)
		catalogue(t, ts, "S-A", ids...)
		fitsOf := map[string][]string{}
		for _, id := range ids {
			for k, l := range runs[id] {
				var f struct{ ID string }
				postJSON(t, ts, "/v1/fits", hillFitBody(l, fmt.Sprintf(`,"assay_id":"S-A","compound_id":%q,"measured_at":"2026-05-0%dT08:00:00Z"`, id, k+1)), 201, &f)
				fitsOf[id] = append(fitsOf[id], f.ID)
			}
		}
		type summary struct {
			N          int      `json:"n"`
			Mean       *float64 `json:"mean_log_ec50"`
			PEC50      *float64 `json:"pec50_mean"`
			MSR        *float64 `json:"msr"`
			MSROverall *float64 `json:"msr_overall"`
		}
		check := func(stage string) {
			t.Helper()
			hist := map[string]json.RawMessage{}
			sums := map[string]summary{}
			for _, id := range ids {
				var h struct {
					Summary json.RawMessage `json:"summary"`
					Runs    []any           `json:"runs"`
				}
				getJSON(t, ts, "/v1/compounds/"+id+"/potency?assay_id=S-A", &h)
				hist[id] = h.Summary
				var s summary
				if err := json.Unmarshal(h.Summary, &s); err != nil {
					t.Fatal(err)
				}
				sums[id] = s
			}
			key := map[string]func(id string) *float64{
				"compound_id":   nil,
				"runs":          func(id string) *float64 { v := float64(len(runs[id])); return &v },
				"n":             func(id string) *float64 { v := float64(sums[id].N); return &v },
				"geo_mean_ec50": func(id string) *float64 { return sums[id].Mean },
				"pec50_mean":    func(id string) *float64 { return sums[id].PEC50 },
				"msr":           func(id string) *float64 { return sums[id].MSR },
				"msr_overall":   func(id string) *float64 { return sums[id].MSROverall },
			}
			for name, k := range key {
				for _, desc := range []bool{false, true} {
					want := slices.Clone(ids)
					slices.SortStableFunc(want, func(a, b string) int {
						c := 0
						if k != nil {
							va, vb := k(a), k(b)
							switch {
							case va == nil && vb == nil:
							case va == nil:
								return 1 // NULLs last either way
							case vb == nil:
								return -1
							case *va < *vb:
								c = -1
							case *va > *vb:
								c = 1
							}
						}
						if c == 0 {
							c = strings.Compare(a, b)
						}
						if desc {
							c = -c
						}
						return c
					})
					sort := name
					if desc {
						sort = "-" + name
					}
					for _, limit := range []int{2, 3, 50} {
						got := walkTable(t, ts, "S-A", "&sort="+sort, limit)
						var order []string
						for _, r := range got {
							order = append(order, r.CompoundID)
							if string(r.Summary) != string(hist[r.CompoundID]) {
								t.Errorf("%s: %s's table summary %s, history %s", stage, r.CompoundID, r.Summary, hist[r.CompoundID])
							}
							if r.Runs != len(runs[r.CompoundID]) {
								t.Errorf("%s: %s has %d runs in the table, want %d", stage, r.CompoundID, r.Runs, len(runs[r.CompoundID]))
							}
						}
						if !slices.Equal(order, want) {
							t.Errorf("%s: sort=%s limit=%d: %v, want %v", stage, sort, limit, order, want)
						}
					}
				}
			}
		}
		check("as posted")
		// Rejecting C-3's first run leaves it with two usable runs: no MSR.
		postJSON(t, ts, "/v1/curves/"+fitsOf["C-3"][0]+"/review", `{"decision":"rejected","reason":"tip clog"}`, 201, nil)
		check("after a rejection")
		// A refit of C-7's third run (without two points) supersedes it.
		postJSON(t, ts, "/v1/curves/"+fitsOf["C-7"][2]+"/refit", `{"exclude":[0, 11],"reason":"edge wells"}`, 201, nil)
		runs["C-7"] = append(runs["C-7"], 0) // the refit is one more run
		check("after a refit")

		// A non-default MSR window recomputes the page's MSRs; it cannot
		// order by them.
		var page struct {
			Compounds []struct {
				CompoundID string          `json:"compound_id"`
				Summary    json.RawMessage `json:"summary"`
			} `json:"compounds"`
		}
		getJSON(t, ts, "/v1/assays/S-A/potency?sort=-n&msr_window=3", &page)
		for _, r := range page.Compounds {
			var h struct {
				Summary json.RawMessage `json:"summary"`
			}
			getJSON(t, ts, "/v1/compounds/"+r.CompoundID+"/potency?assay_id=S-A&msr_window=3", &h)
			if string(h.Summary) != string(r.Summary) {
				t.Errorf("msr_window=3: %s's table summary %s, history %s", r.CompoundID, r.Summary, h.Summary)
			}
		}
		var first struct {
			NextCursor string `json:"next_cursor"`
		}
		getJSON(t, ts, "/v1/assays/S-A/potency?sort=msr&limit=2", &first)
		for _, c := range []struct{ query, param string }{
			{"sort=msr&msr_window=3", "sort"},
			{"sort=potency", "sort"},
			{"sort=-", "sort"},
			{"cursor=bm90LWEtY3Vyc29y", "cursor"},
			{"cursor=%25%25", "cursor"},
			{"sort=n&cursor=" + url.QueryEscape(first.NextCursor), "cursor"},
		} {
			w := ts.do("GET", "/v1/assays/S-A/potency?"+c.query, ScopeRead, "")
			p := problemOf(t, w)
			if w.Code != 400 || len(p.Errors) != 1 || p.Errors[0].Parameter != c.param {
				t.Errorf("%s: %d %+v, want 400 naming %s", c.query, w.Code, p, c.param)
			}
		}
	})
}

// After a bulk load every compound is stale: the first read of the table
// summarises them all, refreshChunk (100) per transaction, and the table
// then holds each compound once with its own history's summary, in order
// (both engines; 250 compounds of two curves each, loaded by Store.Load).
func TestAssayTableAfterBulkLoad(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		t0 := time.Date(2026, 1, 5, 9, 0, 0, 0, time.UTC)
		b := &db.Bulk{Assays: []db.Assay{{ID: "M-A", Name: "bulk", CreatedAt: t0, CreatedBy: "test"}}}
		const n = 250
		for i := range n {
			id := fmt.Sprintf("M-%03d", i)
			b.Compounds = append(b.Compounds, db.Compound{ID: id, Name: id, CreatedAt: t0, CreatedBy: "test"})
			for k := range 2 {
				// Log EC50s −6 − i/1000 and that − 0.1: means fall with i.
				l := -6 - float64(i)/1000 - 0.1*float64(k)
				lo, hi := l-0.2, l+0.2
				at := t0.Add(time.Duration(k) * 24 * time.Hour)
				b.Curves = append(b.Curves, db.CurveResult{ID: fmt.Sprintf("%s-%d", id, k), Kind: db.KindFit, AssayID: "M-A", CompoundID: id,
					MeasuredAt: at, CreatedAt: at, SubmittedBy: "test", Model: "hill", Status: "converged", EngineVersion: "0",
					InputSHA256: "0", Settings: []byte(`{}`), Input: []byte(`{}`), Labels: []byte(`{}`),
					Result:  []byte(`{"activity":"active","qualifier":"=","flags":[]}`),
					LogEC50: db.Estimate{Value: &l, Lo: &lo, Hi: &hi}})
			}
		}
		if err := store.Load(context.Background(), b); err != nil {
			t.Fatal(err)
		}
		rows := walkTable(t, ts, "M-A", "&sort=-pec50_mean", 40)
		if len(rows) != n {
			t.Fatalf("%d rows, want %d", len(rows), n)
		}
		for i, r := range rows {
			if want := fmt.Sprintf("M-%03d", n-1-i); r.CompoundID != want || r.Runs != 2 {
				t.Fatalf("row %d: %s with %d runs, want %s (the most potent first) with 2", i, r.CompoundID, r.Runs, want)
			}
		}
		for _, i := range []int{0, 99, 100, 249} { // either side of a chunk's edge
			var h struct {
				Summary json.RawMessage `json:"summary"`
			}
			getJSON(t, ts, "/v1/compounds/"+rows[i].CompoundID+"/potency?assay_id=M-A", &h)
			if string(h.Summary) != string(rows[i].Summary) {
				t.Errorf("%s: table %s, history %s", rows[i].CompoundID, rows[i].Summary, h.Summary)
			}
		}
	})
}
