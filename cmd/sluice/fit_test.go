package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"sluice/api/wire"
	"sluice/fit"
)

// dnaseRun1CSV returns R's DNase run 1 (testdata/r-datasets/DNase.csv) as a
// curve CSV.
func dnaseRun1CSV(t testing.TB) string {
	f, err := os.Open("../../testdata/r-datasets/DNase.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	b.WriteString("conc,response\n")
	for _, r := range recs[1:] {
		if r[0] == "1" {
			fmt.Fprintf(&b, "%s,%s\n", r[1], r[2])
		}
	}
	return b.String()
}

func runCLI(t testing.TB, stdin string, args ...string) (code int, stdout, stderr string) {
	var out, errb bytes.Buffer
	code = run(args, strings.NewReader(stdin), &out, &errb)
	return code, out.String(), errb.String()
}

// The command line gives R's DNase run 1 optimum: the exact least-squares
// estimates in testdata/r-datasets/high-precision-reference.json (lower
// −7.8971743660935691577e-3, upper 2.3772388665310514858, lec50
// 0.65465677225479288072, nH 0.94110682028352248779), relative 1e-6.
func TestFitCommandDNase(t *testing.T) {
	code, out, stderr := runCLI(t, dnaseRun1CSV(t), "fit", "-", "--unit", "M", "--format", "json", "--bootstrap", "200", "--seed", "3")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var res []wire.FitResult
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatalf("output is not a JSON array of results: %v\n%s", err, out)
	}
	if len(res) != 1 || res[0].Status != "converged" {
		t.Fatalf("got %+v", res)
	}
	want := map[string]float64{"bottom": -7.8971743660935691577e-3, "top": 2.3772388665310514858,
		"log_ec50": 0.65465677225479288072, "hill": 0.94110682028352248779}
	var order []string
	for _, p := range res[0].Params {
		order = append(order, p.Name)
		w := want[p.Name]
		if d := math.Abs(float64(p.Estimate)-w) / math.Max(math.Abs(w), 0.0172); d > 1e-6 {
			t.Errorf("%s = %v, want %v", p.Name, p.Estimate, w)
		}
		if p.BootCI == nil {
			t.Errorf("%s has no boot_ci with --bootstrap", p.Name)
		}
	}
	if strings.Join(order, ",") != "bottom,top,log_ec50,hill" {
		t.Errorf("params in order %v, want the model's order", order)
	}
	if b := res[0].Bootstrap; b == nil || b.Resamples != 200 || b.Seed != 3 || b.Scheme != "residual" || b.Interval != "bca" {
		t.Errorf("bootstrap = %+v", b)
	}
	if res[0].Caution == "" || res[0].EngineVersion != fit.EngineVersion {
		t.Errorf("caution %q, engine %q", res[0].Caution, res[0].EngineVersion)
	}
	// pec50 = −log_ec50 (FACTS §8); ec50 = 10^log_ec50.
	if d := float64(res[0].PEC50) + 0.65465677225479288072; math.Abs(d) > 1e-6 {
		t.Errorf("pec50 = %v", res[0].PEC50)
	}
}

func TestFitCommandBadInput(t *testing.T) {
	cases := []struct {
		name, csv string
		args      []string
		want      string
	}{
		{"non-numeric response", "conc,response\n1e-9,5\n1e-8,abc\n", []string{"--unit", "M"}, "line 3, column 2 (response)"},
		{"negative concentration", "response,conc\n5,1e-9\n6,-1e-8\n", []string{"--unit", "M"}, "line 3, column 2 (conc)"},
		{"missing column", "conc,resp\n1,2\n", nil, `missing column "response"`},
		{"empty", "", []string{"--unit", "M"}, "no data rows"},
		{"unknown model", "conc,response\n1,2\n", []string{"--unit", "M", "--model", "hill7"}, "unknown model"},
		{"unknown unit", "conc,response\n1,2\n", []string{"--unit", "mg"}, "unknown concentration unit"},
		{"unknown fixed parameter", "conc,response\n1,2\n2,3\n3,4\n4,5\n5,6\n", []string{"--unit", "M", "--fix", "slope=1"}, `no parameter "slope"`},
		{"bad --fix", "conc,response\n1,2\n", []string{"--unit", "M", "--fix", "top"}, "not name=value"},
		// No unit, and none in the header: nanomolar numbers read as molar
		// once gave "EC50 = 2.8 M".
		{"no unit", "conc,response\n1,2\n", nil, "give --unit, or name the unit in the header"},
		{"unit disagrees with header", "conc_nM,response\n1,2\n", []string{"--unit", "uM"}, `column "conc_nM" is in nM, but --unit says uM`},
		{"too many resamples", "conc,response\n1,2\n", []string{"--unit", "M", "--bootstrap", "100001"}, "--bootstrap"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			code, out, stderr := runCLI(t, c.csv, append([]string{"fit", "-"}, c.args...)...)
			if code != 2 {
				t.Errorf("exit %d, want 2 (stdout %q)", code, out)
			}
			if !strings.Contains(stderr, c.want) {
				t.Errorf("stderr %q does not say %q", stderr, c.want)
			}
		})
	}
}

// Several curves in one file come back in input order; units convert to
// molar; too few points is a result with a flag, not an abort.
func TestFitCommandCurvesAndUnits(t *testing.T) {
	var b strings.Builder
	b.WriteString("curve,conc,response\n")
	rng := rand.New(rand.NewPCG(5, 6))
	for _, id := range []string{"zeta", "alpha"} {
		for i := 0; i < 9; i++ {
			c := 1 * math.Pow(10, 0.5*float64(i)) // nM
			y := fit.Hill.Value([]float64{0, 100, -7, 1}, c*1e-9) + rng.NormFloat64()
			fmt.Fprintf(&b, "%s,%g,%g\n", id, c, y)
		}
	}
	b.WriteString("tiny,1,5\ntiny,10,50\n")
	code, out, stderr := runCLI(t, b.String(), "fit", "-", "--unit", "nM", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var res []wire.FitResult
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if len(res) != 3 || res[0].Curve != "zeta" || res[1].Curve != "alpha" || res[2].Curve != "tiny" {
		t.Fatalf("curves %v", res)
	}
	for _, r := range res[:2] {
		// Data generated at log EC50 = −7 M with σ = 1 %: within 0.1 decade.
		if pe := float64(r.PEC50); math.Abs(pe-7) > 0.1 {
			t.Errorf("%s: pec50 %v, want about 7 (the unit is nM)", r.Curve, pe)
		}
	}
	if res[2].Status != fit.StatusNotFitted || !strings.Contains(strings.Join(res[2].Flags, ","), fit.FlagTooFewPoints) {
		t.Errorf("two-point curve: status %s flags %v", res[2].Status, res[2].Flags)
	}
	// Table and CSV formats carry the caution.
	_, table, _ := runCLI(t, b.String(), "fit", "-", "--unit", "nM")
	if !strings.Contains(table, "research use only") || !strings.Contains(table, "zeta") {
		t.Errorf("table output:\n%s", table)
	}
	_, csvOut, csvErr := runCLI(t, b.String(), "fit", "-", "--unit", "nM", "--format", "csv")
	rows, err := csv.NewReader(strings.NewReader(csvOut)).ReadAll()
	if err != nil || len(rows) != 4 || rows[0][0] != "curve" || !strings.Contains(csvErr, "research use only") {
		t.Errorf("csv output (%v):\n%s\nstderr %s", err, csvOut, csvErr)
	}
}

// The help of --model is generated from fit's registry: every model, with
// its summary, and the registry's default.
func TestFitHelpListsModels(t *testing.T) {
	code, _, stderr := runCLI(t, "", "fit", "-h")
	if code != 0 {
		t.Fatalf("exit %d", code)
	}
	models := fit.Builtin()
	for _, m := range models.Names() {
		spec, _ := models.Lookup(m)
		if !strings.Contains(stderr, string(m)+" ") || !strings.Contains(stderr, spec.Summary()) {
			t.Errorf("help does not describe %s:\n%s", m, stderr)
		}
	}
	if want := fmt.Sprintf("(default %q)", models.Default()); !strings.Contains(stderr, want) {
		t.Errorf("help does not say %s", want)
	}
}
