package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"strings"

	"github.com/prometheus/client_golang/prometheus"

	"sluice/api"
	"sluice/db"
	"sluice/fit"
)

// The demo scenario is invented from start to finish: Larkspur
// Neuropharmacology, a fictional lab, characterises agonists at LGX-7, an
// invented cation-selective ligand-gated channel, with a membrane-potential
// dye assay. A reference agonist runs every week for six weeks beside
// candidate compounds. No real compound, receptor or dataset is depicted.

const demoAssay = "lgx7-vm-dye"

type demoCompound struct {
	id, name         string
	top, logEC, hill float64
}

var demoCompounds = []demoCompound{
	{"LX-REF", "LX-REF (reference full agonist)", 100, -6.5, 1.3},
	{"LX-101", "LX-101", 96, -7.2, 1.1},
	{"LX-102", "LX-102", 58, -6.1, 1.0}, // a partial agonist
	{"LX-103", "LX-103", 101, -5.4, 1.8},
	{"LX-104", "LX-104", 88, -7.9, 0.8},
}

// loadDemo loads the scenario through the API's own handlers (in process,
// no network) unless the store already has it, and returns how many fits
// it stored.
func loadDemo(ctx context.Context, store db.Store) (int, error) {
	if _, err := store.Assay(ctx, demoAssay); err == nil {
		return 0, nil
	} else if !errors.Is(err, db.ErrNotFound) {
		return 0, err
	}
	srv, err := api.New(api.Config{AuthDisabled: true}, api.Deps{Store: store, Registry: prometheus.NewRegistry()})
	if err != nil {
		return 0, err
	}
	post := func(path string, body any) error {
		b, _ := json.Marshal(body)
		req := httptest.NewRequestWithContext(ctx, http.MethodPost, path, strings.NewReader(string(b)))
		req.Header.Set("Content-Type", "application/json")
		w := httptest.NewRecorder()
		srv.Handler().ServeHTTP(w, req)
		if w.Code >= 300 {
			return fmt.Errorf("demo: POST %s: %d %s", path, w.Code, w.Body)
		}
		return nil
	}
	if err := post("/v1/assays", map[string]string{"id": demoAssay, "name": "LGX-7 membrane-potential dye (demo)",
		"target": "LGX-7 (invented cation channel)", "readout": "membrane potential dye", "units": "% of reference max"}); err != nil {
		return 0, err
	}
	for _, c := range demoCompounds {
		if err := post("/v1/compounds", map[string]string{"id": c.id, "name": c.name, "target": "LGX-7"}); err != nil {
			return 0, err
		}
	}
	rng := rand.New(rand.NewPCG(2026, 7))
	n := 0
	for week := 1; week <= 6; week++ {
		for k, c := range demoCompounds {
			if k > 0 && week%2 == 0 && k%2 == 0 {
				continue // candidates are not run every week
			}
			// Week-to-week potency drift of the assay: a few hundredths
			// of a log unit, as a real assay might show.
			shift := 0.04 * rng.NormFloat64()
			theta := []float64{0, c.top, c.logEC + shift, c.hill}
			var pts []map[string]float64
			for i := -1; i < 10; i++ {
				conc := 0.0
				if i >= 0 {
					conc = 1 * math.Pow(10, 0.5*float64(i)) // nM
				}
				for r := 0; r < 3; r++ {
					y := fit.Hill.Value(theta, conc*1e-9) + 4*rng.NormFloat64()
					pts = append(pts, map[string]float64{"conc": conc, "response": math.Round(y*100) / 100})
				}
			}
			body := map[string]any{"model": "hill", "conc_unit": "nM", "points": pts, "assay_id": demoAssay,
				"compound_id": c.id, "bootstrap": map[string]any{"resamples": 500, "seed": 1000*week + k},
				"labels": map[string]string{"week": fmt.Sprintf("demo-week-%d", week), "plate": fmt.Sprintf("LK-%04d", 100+week)}}
			if err := post("/v1/fits", body); err != nil {
				return n, err
			}
			n++
		}
	}
	return n, nil
}

// runDemo is `sluice demo`: load the scenario into the configured store.
func runDemo(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("demo", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	ctx := context.Background()
	store, err := db.Open(ctx, getenv("SLUICE_DATABASE_URL"), *data)
	if err != nil {
		fmt.Fprintf(stderr, "sluice demo: %v\n", err)
		return 1
	}
	defer store.Close()
	n, err := loadDemo(ctx, store)
	if err != nil {
		fmt.Fprintf(stderr, "sluice demo: %v\n", err)
		return 1
	}
	if n == 0 {
		fmt.Fprintln(stdout, "sluice demo: the store already holds the demo scenario")
		return 0
	}
	fmt.Fprintf(stdout, "sluice demo: loaded the invented LGX-7 scenario: %d fits of %d compounds over six weeks\n", n, len(demoCompounds))
	return 0
}
