package api

import (
	"context"
	"fmt"
	"io"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"os"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/prometheus/client_golang/prometheus"

	"sluice/db"
	"sluice/db/dbtest"
)

// Sizes of the potency benchmark's store. The figure is 1 000 000
// curves over 20 000 plates and 5 000 compounds; SLUICE_BENCH_CURVES
// scales the curves (and the plates with them, 50 curves a plate).
const (
	benchCompounds      = 5000
	benchAssays         = 10
	benchCurvesPerPlate = 50
)

// seedPotency fills a migrated PostgreSQL schema with plates and plate
// curves by COPY: plate p belongs to assay p mod 10, is measured a day
// after plate p−1, fails QC one time in twenty, and holds 50 curves of
// compounds (50p + j) mod 5000, so every compound has curves in every
// assay. Result documents are short but carry what a history reads
// (activity, qualifier, flags).
func seedPotency(b *testing.B, url string, curves int) {
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, url)
	if err != nil {
		b.Fatal(err)
	}
	defer conn.Close(ctx)
	start := time.Now()
	t0 := time.Date(2020, 1, 1, 9, 0, 0, 0, time.UTC)
	copyRows := func(table string, cols []string, n int, row func(i int) []any) {
		i := 0
		_, err := conn.CopyFrom(ctx, pgx.Identifier{table}, cols, pgx.CopyFromFunc(func() ([]any, error) {
			if i == n {
				return nil, nil
			}
			i++
			return row(i - 1), nil
		}))
		if err != nil {
			b.Fatalf("copy %s: %v", table, err)
		}
	}
	copyRows("assays", []string{"id", "name", "created_at"}, benchAssays, func(i int) []any {
		return []any{fmt.Sprintf("BA-%02d", i), "bench", t0}
	})
	copyRows("compounds", []string{"id", "name", "created_at"}, benchCompounds, func(i int) []any {
		return []any{fmt.Sprintf("BC-%05d", i), "bench", t0}
	})
	plates := curves / benchCurvesPerPlate
	copyRows("plates", []string{"id", "created_at", "submitted_by", "assay_id", "barcode", "format", "measured_at", "conc_unit", "mode",
		"settings", "input_sha256", "status", "qc_pass"}, plates, func(p int) []any {
		at := t0.Add(time.Duration(p) * 24 * time.Hour / 10)
		return []any{fmt.Sprintf("BP-%06d", p), at, "bench", fmt.Sprintf("BA-%02d", p%benchAssays), fmt.Sprintf("B-%06d", p), 384, at, "M",
			"agonist", "{}", "0", "done", p%20 != 7}
	})
	rng := rand.New(rand.NewPCG(1, 2))
	docs := []string{`{"activity":"active","qualifier":"=","flags":[],"status":"converged","model":"hill"}`,
		`{"activity":"active","qualifier":">","flags":[],"status":"converged","model":"hill"}`,
		`{"activity":"inactive","qualifier":null,"flags":[],"status":"converged","model":"hill"}`}
	copyRows("curve_results", []string{"id", "kind", "plate_id", "curve_key", "assay_id", "compound_id", "measured_at", "created_at",
		"submitted_by", "model", "status", "log_ec50", "log_ec50_lo", "log_ec50_hi", "engine_version", "input_sha256", "settings", "result"},
		plates*benchCurvesPerPlate, func(i int) []any {
			p, j := i/benchCurvesPerPlate, i%benchCurvesPerPlate
			cpd := (benchCurvesPerPlate*p + j) % benchCompounds
			at := t0.Add(time.Duration(p) * 24 * time.Hour / 10)
			doc := docs[0]
			switch k := rng.IntN(20); {
			case k == 0:
				doc = docs[1]
			case k == 1:
				doc = docs[2]
			}
			l := -7 + float64(cpd%30)/10 + 0.1*rng.NormFloat64()
			var lv, lo, hi any = l, l - 0.2, l + 0.2
			if doc == docs[2] {
				lv, lo, hi = nil, nil, nil
			}
			cid := fmt.Sprintf("BC-%05d", cpd)
			return []any{fmt.Sprintf("BP-%06d:%s", p, cid), "plate_curve", fmt.Sprintf("BP-%06d", p), cid, fmt.Sprintf("BA-%02d", p%benchAssays),
				cid, at, at, "bench", "hill", "converged", lv, lo, hi, "0", "0", "{}", doc}
		})
	if _, err := conn.Exec(ctx, "ANALYZE"); err != nil {
		b.Fatal(err)
	}
	b.Logf("seeded %d curves over %d plates and %d compounds in %v", plates*benchCurvesPerPlate, plates, benchCompounds, time.Since(start).Round(time.Second))
	// The plans of the two queries behind the routes (the SQL of
	// db.CompoundPotency and db.AssayCompounds / db.AssayPotency).
	for _, q := range []string{
		"EXPLAIN SELECT c.id FROM curve_results c LEFT JOIN plates p ON p.id = c.plate_id WHERE c.compound_id = 'BC-00042' AND c.assay_id = 'BA-03' ORDER BY c.measured_at, c.id",
		"EXPLAIN SELECT DISTINCT compound_id FROM curve_results WHERE assay_id = 'BA-03' AND compound_id IS NOT NULL ORDER BY compound_id ASC LIMIT 51",
		"EXPLAIN SELECT c.id FROM curve_results c LEFT JOIN plates p ON p.id = c.plate_id WHERE c.assay_id = 'BA-03' AND c.compound_id IN ('BC-00000', 'BC-00001') ORDER BY c.compound_id, c.measured_at, c.id",
		"EXPLAIN SELECT 1 FROM curve_results n WHERE n.refit_of = 'x'",
	} {
		rows, err := conn.Query(ctx, q)
		if err != nil {
			b.Fatal(err)
		}
		var plan []string
		for rows.Next() {
			var line string
			if err := rows.Scan(&line); err != nil {
				b.Fatal(err)
			}
			plan = append(plan, line)
		}
		rows.Close()
		b.Logf("%s\n%s", q, strings.Join(plan, "\n"))
	}
}

// BenchmarkPotency measures GET /v1/compounds/{id}/potency (one assay, a
// random compound) and the first page of GET /v1/assays/{id}/potency (50
// compounds) over loopback on PostgreSQL with SLUICE_BENCH_CURVES stored
// curves (default 100 000), and reports p50 and p95 in ms.
func BenchmarkPotency(b *testing.B) {
	curves := 100_000
	if v := os.Getenv("SLUICE_BENCH_CURVES"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil {
			b.Fatal(err)
		}
		curves = n
	}
	url := dbtest.PostgresURL(b)
	store, err := db.Open(b.Context(), url, "")
	if err != nil {
		b.Fatal(err)
	}
	defer store.Close()
	seedPotency(b, url, curves)
	srv, err := New(Config{AuthDisabled: true}, Deps{Store: store, Registry: prometheus.NewRegistry()})
	if err != nil {
		b.Fatal(err)
	}
	hs := httptest.NewServer(srv.Handler())
	defer hs.Close()
	// Seeding by COPY leaves every compound's summary stale; the first
	// read of each assay's table computes them (once), outside the timing.
	for a := range benchAssays {
		resp, err := http.Get(fmt.Sprintf("%s/v1/assays/BA-%02d/potency", hs.URL, a))
		if err != nil {
			b.Fatal(err)
		}
		_, _ = io.Copy(io.Discard, resp.Body)
		resp.Body.Close()
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for _, c := range []struct {
		name string
		path func() string
	}{
		{"compound", func() string {
			return fmt.Sprintf("/v1/compounds/BC-%05d/potency?assay_id=BA-%02d", rng.IntN(benchCompounds), rng.IntN(benchAssays))
		}},
		{"compound_all_assays", func() string { return fmt.Sprintf("/v1/compounds/BC-%05d/potency", rng.IntN(benchCompounds)) }},
		{"assay_table", func() string { return fmt.Sprintf("/v1/assays/BA-%02d/potency", rng.IntN(benchAssays)) }},
	} {
		b.Run(c.name, func(b *testing.B) {
			lat := make([]time.Duration, 0, b.N)
			for b.Loop() {
				t := time.Now()
				resp, err := http.Get(hs.URL + c.path())
				if err != nil {
					b.Fatal(err)
				}
				_, _ = io.Copy(io.Discard, resp.Body)
				resp.Body.Close()
				if resp.StatusCode != 200 {
					b.Fatalf("%s", resp.Status)
				}
				lat = append(lat, time.Since(t))
			}
			slices.Sort(lat)
			b.ReportMetric(float64(lat[len(lat)/2].Microseconds())/1000, "p50_ms")
			b.ReportMetric(float64(lat[len(lat)*95/100].Microseconds())/1000, "p95_ms")
		})
	}
}
