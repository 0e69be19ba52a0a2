package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"sluice/api"
	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
)

// `sluice history` prints the history the API answers, in each format.
func TestHistory(t *testing.T) {
	store := dbtest.SQLite(t)
	srv, err := api.New(api.Config{}, api.Deps{Store: store})
	if err != nil {
		t.Fatal(err)
	}
	secret, hash := api.NewToken()
	ctx := context.Background()
	if err := store.Write(ctx, func(w db.Writer) error {
		return w.InsertToken(ctx, &db.Token{ID: "t", Name: "lab", Scope: api.ScopeSubmit, Hash: hash})
	}); err != nil {
		t.Fatal(err)
	}
	hs := httptest.NewServer(srv.Handler())
	defer hs.Close()
	post := func(path, body string) {
		t.Helper()
		req, _ := http.NewRequest(http.MethodPost, hs.URL+path, strings.NewReader(body))
		req.Header.Set("Authorization", "Bearer "+secret)
		req.Header.Set("Content-Type", "application/json")
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			t.Fatal(err)
		}
		resp.Body.Close()
		if resp.StatusCode != http.StatusCreated {
			t.Fatalf("POST %s: %s", path, resp.Status)
		}
	}
	post("/v1/assays", `{"id":"A1","name":"a"}`)
	post("/v1/compounds", `{"id":"C1","name":"c"}`)
	// 1, 2 and 4 µM: geometric mean 2 µM (FACTS §8).
	for i, l := range []float64{-6, math.Log10(2e-6), math.Log10(4e-6)} {
		var pts []string
		for k := range 12 {
			c := math.Pow(10, l-2.75+0.5*float64(k))
			pts = append(pts, fmt.Sprintf(`{"conc":%.17g,"response":%.17g}`, c, fit.Hill.Value([]float64{0, 100, l, 1}, c)))
		}
		post("/v1/fits", fmt.Sprintf(`{"conc_unit":"M","points":[%s],"assay_id":"A1","compound_id":"C1","measured_at":"2026-05-0%dT10:00:00Z"}`,
			strings.Join(pts, ","), i+1))
	}
	args := []string{"history", "C1", "--assay", "A1", "--server", hs.URL, "--token", secret}
	var out, errs bytes.Buffer
	if code := run(append(args, "--format", "json"), nil, &out, &errs); code != 0 {
		t.Fatalf("json: exit %d: %s", code, errs.String())
	}
	var h struct {
		Summary struct {
			N           int     `json:"n"`
			GeoMeanEC50 float64 `json:"geo_mean_ec50"`
		} `json:"summary"`
	}
	if err := json.Unmarshal(out.Bytes(), &h); err != nil || h.Summary.N != 3 || math.Abs(h.Summary.GeoMeanEC50-2e-6) > 1e-12 {
		t.Errorf("json: %+v %v", h, err)
	}
	out.Reset()
	if code := run(append(args, "--format", "csv"), nil, &out, &errs); code != 0 {
		t.Fatalf("csv: exit %d: %s", code, errs.String())
	}
	cr := csv.NewReader(strings.NewReader(out.String()))
	cr.Comment = '#'
	recs, err := cr.ReadAll()
	if err != nil || len(recs) != 4 || recs[1][1] != "fit" || recs[1][4] != "2026-05-01T10:00:00Z" {
		t.Errorf("csv: %v %v", recs, err)
	}
	out.Reset()
	if code := run(args, nil, &out, &errs); code != 0 {
		t.Fatalf("table: exit %d: %s", code, errs.String())
	}
	if s := out.String(); !strings.Contains(s, "3 usable runs: geometric mean EC50 2e-06 M") || !strings.Contains(s, "For research use only") {
		t.Errorf("table:\n%s", s)
	}
	// An unknown assay is the server's 400, said plainly; exit 1.
	errs.Reset()
	if code := run([]string{"history", "C1", "--assay", "nope", "--server", hs.URL, "--token", secret}, nil, &out, &errs); code != 1 ||
		!strings.Contains(errs.String(), "no assay") {
		t.Errorf("unknown assay: exit %d, %s", code, errs.String())
	}
}
