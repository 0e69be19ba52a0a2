package fit

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"testing"
)

// readCSV returns the rows of a CSV file with a header.
func readCSV(t *testing.T, path string) []map[string]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var rows []map[string]string
	for _, rec := range recs[1:] {
		row := map[string]string{}
		for i, h := range recs[0] {
			row[h] = rec[i]
		}
		rows = append(rows, row)
	}
	return rows
}

func atof(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// highPrecision reads testdata/r-datasets/high-precision-reference.json: the
// exact least-squares optima (50-digit Gauss–Newton) of R's DNase run 1 and
// Puromycin treated fits.
func highPrecision(t *testing.T, fit string) (est, se map[string]float64, rss float64) {
	t.Helper()
	raw, err := os.ReadFile("../testdata/r-datasets/high-precision-reference.json")
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Fits map[string]struct {
			Estimates map[string]string `json:"estimates"`
			StdErrors map[string]string `json:"std_errors"`
			RSS       string            `json:"rss"`
		} `json:"fits"`
	}
	if err := json.Unmarshal(raw, &doc); err != nil {
		t.Fatal(err)
	}
	f := doc.Fits[fit]
	est, se = map[string]float64{}, map[string]float64{}
	for k, v := range f.Estimates {
		est[k] = atof(t, v)
	}
	for k, v := range f.StdErrors {
		se[k] = atof(t, v)
	}
	return est, se, atof(t, f.RSS)
}

func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

// TestDNaseRun1 fits R's DNase run 1 with the four-parameter Hill equation
// (the same curve as R's lower + (upper − lower)/(1 + 10^((lec50 −
// log10(conc))·nH))) and checks it against the exact optimum in
// high-precision-reference.json, with the tolerances its README suggests:
// estimates relative 1e-6 (1e-6·SE absolute near 0), SEs 1e-5, RSS 1e-10.
func TestDNaseRun1(t *testing.T) {
	var c Curve
	for _, row := range readCSV(t, "../testdata/r-datasets/DNase.csv") {
		if row["Run"] == "1" {
			c.Points = append(c.Points, Point{Conc: atof(t, row["conc"]), Response: atof(t, row["density"])})
		}
	}
	if len(c.Points) != 16 {
		t.Fatalf("DNase run 1 has %d points, want 16", len(c.Points))
	}
	r, err := Fit(c, nil)
	if err != nil || !r.Converged() {
		t.Fatalf("fit: %v, status %s", err, r.Status)
	}
	est, se, rss := highPrecision(t, "dnase_run1_4pl_log10")
	names := map[string]string{"bottom": "lower", "top": "upper", "log_ec50": "lec50", "hill": "nH"}
	for ours, theirs := range names {
		p, _ := r.Param(ours)
		tol := 1e-6 * math.Abs(est[theirs])
		if math.Abs(est[theirs]) < se[theirs] {
			tol = 1e-6 * se[theirs] // bottom ≈ −0.008, within its SE of 0
		}
		if d := math.Abs(p.Estimate - est[theirs]); d > tol {
			t.Errorf("%s = %.12g, want %.12g (|diff| %.3g > %.3g)", ours, p.Estimate, est[theirs], d, tol)
		}
		if e := relErr(p.SE, se[theirs]); e > 1e-5 {
			t.Errorf("SE(%s) = %.12g, want %.12g (rel %.2g)", ours, p.SE, se[theirs], e)
		}
	}
	if e := relErr(r.RSS, rss); e > 1e-10 {
		t.Errorf("RSS = %.15g, want %.15g (rel %.2g)", r.RSS, rss, e)
	}
	if r.DOF != 12 {
		t.Errorf("dof = %d, want 12", r.DOF)
	}
}

// TestPuromycinTreated fits R's Puromycin (treated) Michaelis–Menten curve
// Vm·c/(K + c) as a Hill curve with bottom fixed at 0 and slope fixed at 1:
// top = Vm and log_ec50 = log10 K, so K = 10^log_ec50 and, by the delta
// method (exact for a reparameterisation at the optimum), SE(K) =
// K·ln10·SE(log_ec50). Reference: high-precision-reference.json, tolerances
// as for DNase.
func TestPuromycinTreated(t *testing.T) {
	var c Curve
	for _, row := range readCSV(t, "../testdata/r-datasets/Puromycin.csv") {
		if row["state"] == "treated" {
			c.Points = append(c.Points, Point{Conc: atof(t, row["conc"]), Response: atof(t, row["rate"])})
		}
	}
	r, err := Fit(c, &Settings{Fixed: map[string]float64{"bottom": 0, "hill": 1}})
	if err != nil || !r.Converged() {
		t.Fatalf("fit: %v, status %s", err, r.Status)
	}
	est, se, rss := highPrecision(t, "puromycin_treated_ssmicmen")
	top, _ := r.Param("top")
	L, _ := r.Param("log_ec50")
	K := math.Pow(10, L.Estimate)
	seK := K * math.Ln10 * L.SE
	checks := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		{"Vm", top.Estimate, est["Vm"], 1e-6},
		{"K", K, est["K"], 1e-6},
		{"SE(Vm)", top.SE, se["Vm"], 1e-5},
		{"SE(K)", seK, se["K"], 1e-5},
		{"RSS", r.RSS, rss, 1e-10},
	}
	for _, c := range checks {
		if e := relErr(c.got, c.want); e > c.tol {
			t.Errorf("%s = %.12g, want %.12g (rel %.2g > %g)", c.name, c.got, c.want, e, c.tol)
		}
	}
	if r.DOF != 10 {
		t.Errorf("dof = %d, want 10", r.DOF)
	}
}

// TestRat42AsHill fits NIST StRD Rat42, y = b1/(1 + exp(b2 − b3·x)), which is
// a Hill curve with bottom 0 on a log axis: with x as log10 concentration,
// top = b1, hill = b3/ln10, log_ec50 = b2/b3 (FACTS §1, "Rat42 as Hill").
// Certified values from NIST (testdata/nist-strd/Rat42.dat).
func TestRat42AsHill(t *testing.T) {
	xs := []float64{9, 14, 21, 28, 42, 57, 63, 70, 79}
	ys := []float64{8.93, 10.80, 18.59, 22.33, 39.35, 56.11, 61.73, 64.62, 67.08}
	var c Curve
	for i, x := range xs {
		c.Points = append(c.Points, Point{Conc: math.Pow(10, x), Response: ys[i]})
	}
	r, err := Fit(c, &Settings{Fixed: map[string]float64{"bottom": 0}, PotencyMargin: 20, MaxHill: 1000})
	if err != nil || !r.Converged() {
		t.Fatalf("fit: %v, status %s", err, r.Status)
	}
	const b1, b2, b3 = 72.462237576, 2.6180768402, 0.067359200066 // NIST certified
	top, _ := r.Param("top")
	h, _ := r.Param("hill")
	L, _ := r.Param("log_ec50")
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"top", top.Estimate, b1},
		{"hill·ln10", h.Estimate * math.Ln10, b3},
		{"log_ec50·hill·ln10", L.Estimate * h.Estimate * math.Ln10, b2},
	} {
		if e := relErr(c.got, c.want); e > 1e-6 { // FACTS §1: rel 1e-6
			t.Errorf("%s = %.10g, want %.10g (rel %.2g)", c.name, c.got, c.want, e)
		}
	}
	// NIST certified RSS and residual SD, rel 1e-8 (FACTS §1).
	if e := relErr(r.RSS, 8.0565229338); e > 1e-8 {
		t.Errorf("RSS = %.12g, want 8.0565229338", r.RSS)
	}
	if e := relErr(r.Sigma, 1.1587725499); e > 1e-8 {
		t.Errorf("sigma = %.12g, want 1.1587725499", r.Sigma)
	}
	// NIST certified SE of b1, rel 1e-4 (FACTS §1).
	if e := relErr(top.SE, 1.7340283401); e > 1e-4 {
		t.Errorf("SE(top) = %.10g, want 1.7340283401", top.SE)
	}
	// FACTS §1 [C]: Rat42 as Hill — nH 0.02925373, logEC50 38.86740, rel 1e-6.
	if e := relErr(h.Estimate, 0.02925373); e > 1e-6 {
		t.Errorf("hill = %.10g, want 0.02925373", h.Estimate)
	}
	if e := relErr(L.Estimate, 38.86740); e > 1e-6 {
		t.Errorf("log_ec50 = %.10g, want 38.86740", L.Estimate)
	}
}
