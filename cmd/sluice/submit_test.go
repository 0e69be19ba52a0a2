package main

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"

	"sluice/api"
	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/plate"
)

// invented96CSV is an invented 96-well plate: max controls in column 1, min
// in column 12, eight compounds (one per row) at 10 concentrations.
func invented96CSV() string {
	rng := rand.New(rand.NewPCG(96, 1))
	var b strings.Builder
	b.WriteString("well,role,compound_id,conc,value\n")
	for r := 0; r < 8; r++ {
		f := plate.Plate96
		fmt.Fprintf(&b, "%s,max_control,,,%.1f\n", f.Name(plate.Well{Row: r, Col: 0}), 1000+20*rng.NormFloat64())
		fmt.Fprintf(&b, "%s,min_control,,,%.1f\n", f.Name(plate.Well{Row: r, Col: 11}), 100+20*rng.NormFloat64())
		for c := 1; c <= 10; c++ {
			conc := 1e-9 * math.Pow(10, 0.5*float64(c-1))
			y := 100 + 900*fit.Hill.Value([]float64{0, 1, -7 + 0.2*float64(r), 1.2}, conc) + 20*rng.NormFloat64()
			fmt.Fprintf(&b, "%s,sample,demo-ag-%d,%g,%.1f\n", f.Name(plate.Well{Row: r, Col: c}), r, conc, y)
		}
	}
	return b.String()
}

// submit posts a plate through a server whose first answer is a 503: the
// retry carries the same Idempotency-Key, so one plate is stored, and
// --wait prints the QC and every potency.
func TestSubmit(t *testing.T) {
	store := dbtest.SQLite(t)
	srv, err := api.New(api.Config{}, api.Deps{Store: store})
	if err != nil {
		t.Fatal(err)
	}
	secret, hash := api.NewToken()
	ctx := context.Background()
	store.Write(ctx, func(w db.Writer) error {
		return w.InsertToken(ctx, &db.Token{ID: "t", Name: "pipeline-3", Scope: api.ScopeSubmit, Hash: hash})
	})
	if err := store.StartWorkers(ctx, srv.Service().RunPlateJob, 1); err != nil {
		t.Fatal(err)
	}
	defer store.StopWorkers(ctx)
	var posts atomic.Int32
	hs := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Method == http.MethodPost && posts.Add(1) == 1 {
			http.Error(w, "try again", http.StatusServiceUnavailable)
			return
		}
		srv.Handler().ServeHTTP(w, r)
	}))
	defer hs.Close()
	dir := t.TempDir()
	path := filepath.Join(dir, "LK-96-01.csv")
	os.WriteFile(path, []byte(invented96CSV()), 0o644)
	code, out, stderr := runCLI(t, "", "submit", "--server", hs.URL, "--token", secret, "--format", "96", "--unit", "M", "--bootstrap", "200", "--wait", path)
	if code != 0 {
		t.Fatalf("exit %d\n%s\n%s", code, out, stderr)
	}
	if !strings.Contains(stderr, "retrying") || !strings.Contains(out, "QC pass") || strings.Count(out, "demo-ag-") != 8 ||
		!strings.Contains(out, "research use only") {
		t.Errorf("output:\n%s\nstderr:\n%s", out, stderr)
	}
	// Submitting the same file again replays: still one plate.
	code, out2, _ := runCLI(t, "", "submit", "--server", hs.URL, "--token", secret, "--format", "96", "--unit", "M", "--bootstrap", "200", path)
	if code != 0 || strings.Fields(out2)[2] != strings.Fields(out)[2] {
		t.Errorf("resubmission made a new plate:\n%s\nvs\n%s", out2, out)
	}
	// A bad file: the problem's pointer reaches the user, exit 1.
	bad := filepath.Join(dir, "bad.csv")
	os.WriteFile(bad, []byte("well,role,compound_id,conc,value\nZ1,sample,X,1,2\n"), 0o644)
	code, _, stderr = runCLI(t, "", "submit", "--server", hs.URL, "--token", secret, "--format", "96", "--unit", "M", bad)
	if code != 1 || !strings.Contains(stderr, "row 2") || !strings.Contains(stderr, "Z1") {
		t.Errorf("bad file: exit %d, %s", code, stderr)
	}
	// No --unit and none in the header: refused before anything is sent.
	before := posts.Load()
	code, _, stderr = runCLI(t, "", "submit", "--server", hs.URL, "--token", secret, "--format", "96", path)
	if code != 2 || !strings.Contains(stderr, "give --unit, or name the unit in the header") || posts.Load() != before {
		t.Errorf("no unit: exit %d, %d posts, %s", code, posts.Load()-before, stderr)
	}
}
