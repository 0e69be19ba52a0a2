package main

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/fit"
)

// runFit is `sluice fit FILE|-`.
func runFit(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("fit", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: sluice fit FILE|- [flags]\n\n"+
			"Fits every curve of a CSV file with a header: conc, response, optional weight,\n"+
			"optional curve (many curves in one file). Flags:\n")
		fs.PrintDefaults()
	}
	models := fit.Builtin()
	model := fs.String("model", string(models.Default()), "curve model, one of:\n"+models.Help())
	fix := fs.String("fix", "", "fixed parameters, e.g. bottom=0,top=100 or hill=1")
	unit := fs.String("unit", "", "concentration unit of the file: M, mM, uM, nM or pM (required unless the header names it: conc_nM)")
	resamples := fs.Int("bootstrap", 0, "bootstrap resamples B, 0 for none (at most 100000)")
	scheme := fs.String("scheme", "residual", "bootstrap scheme: residual or case")
	interval := fs.String("interval", "bca", "bootstrap interval: bca or percentile")
	seed := fs.Uint64("seed", 1, "bootstrap seed; the same seed gives the same intervals")
	confidence := fs.Float64("confidence", 0.95, "confidence level of every interval")
	maxHill := fs.Float64("max-hill", fit.DefaultMaxHill, "bound on the magnitude of the Hill slope")
	alpha := fs.Float64("alpha", fit.DefaultActivityAlpha, "level of the F test against a flat line that calls a curve active")
	window := fs.Float64("window", 0, "assay window in response units (e.g. 100 for percent of control); 0 means unknown, no minimum effect")
	minEffect := fs.Float64("min-effect", fit.DefaultMinEffect, "smallest effect an active curve must show, as a fraction of --window")
	workers := fs.Int("workers", 0, "goroutines; 0 means one per CPU")
	format := fs.String("format", "table", "output: table, json or csv")
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		return 2
	}
	if len(pos) != 1 {
		fmt.Fprintln(stderr, "sluice fit: want exactly one FILE (or - for standard input)")
		fs.Usage()
		return 2
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "sluice fit: "+format+"\n", a...)
		return 2
	}
	if *format != "table" && *format != "json" && *format != "csv" {
		return fail("--format: %q is not table, json or csv", *format)
	}
	if *resamples < 0 || *resamples > fit.MaxResamples {
		return fail("--bootstrap: %d is outside [0, %d]", *resamples, fit.MaxResamples)
	}
	u, err := ingest.ParseUnit(*unit)
	if err != nil {
		return fail("--unit: %v", err)
	}
	fixed, err := parseFixed(*fix)
	if err != nil {
		return fail("%v", err)
	}
	m, err := fit.ParseModel(*model)
	if err != nil {
		return fail("--model: %v", err)
	}

	name := pos[0]
	if name == "-" {
		name = "standard input"
	}
	in, closeIn, err := openInput(pos[0], stdin)
	if err != nil {
		return fail("%v", err)
	}
	defer closeIn()
	curves, err := ingest.ReadCurves(in, u, "--unit")
	if err != nil {
		return fail("%s: %v", name, err)
	}
	settings := &fit.Settings{Model: m, Fixed: fixed, Confidence: *confidence, MaxHill: *maxHill,
		ActivityAlpha: *alpha, Window: *window, MinEffect: *minEffect}
	var bs *fit.BootSettings
	if *resamples > 0 {
		bs = &fit.BootSettings{Resamples: *resamples, Scheme: fit.Scheme(*scheme),
			Interval: fit.Interval(*interval), Seed: *seed}
	}
	results, err := fit.FitBatch(context.Background(), curves, settings, bs, *workers, nil)
	if err != nil {
		return fail("%s: %v", name, err)
	}
	switch *format {
	case "json":
		out := make([]wire.FitResult, len(results))
		for i, r := range results {
			out[i] = wire.FromFit(r)
		}
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		err = enc.Encode(out)
	case "csv":
		err = writeCSV(stdout, results)
		fmt.Fprintln(stderr, wire.Caution)
	default:
		err = writeTable(stdout, results)
	}
	if err != nil {
		fmt.Fprintf(stderr, "sluice fit: write: %v\n", err)
		return 1
	}
	return 0
}

// writeTable prints one line per curve and the research-use caution.
func writeTable(w io.Writer, results []*fit.Result) error {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "curve\tmodel\tstatus\tactivity\tpEC50|pIC50\tEC50|IC50 (M)\tCI\thill\tbottom\ttop\tr²\tflags")
	for _, r := range results {
		est, lo, hi := r.EC50()
		h, b, t := r.HillSlope(), r.Bottom(), r.Top()
		ci := "-"
		if r.HasPotency() {
			ci = "[" + g3(lo) + ", " + g3(hi) + "]"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n", r.Curve, r.Model, r.Status, r.Activity,
			qualified(r, true, g4(-math.Log10(est))), qualified(r, false, g3(est)), ci, g3(h.Estimate), g3(b.Estimate), g3(t.Estimate),
			g4(r.R2), strings.Join(r.Flags, ","))
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	_, err := fmt.Fprintf(w, "\n%s\n", wire.Caution)
	return err
}

// qualified writes a potency the way screening results read: "-" with no
// potency, the label of the direction ("pIC50 6.2" reads from the header),
// and for an EC50 beyond the tested range the bound with its qualifier
// ("> 3.16e-05", or for the p-value "< 4.5").
func qualified(r *fit.Result, pValue bool, v string) string {
	if !r.HasPotency() {
		return "-"
	}
	q := r.Qualifier
	if q != ">" && q != "<" {
		return v
	}
	b := r.Bound
	if pValue {
		q = map[string]string{">": "<", "<": ">"}[q]
		return q + " " + g4(-math.Log10(b))
	}
	return q + " " + g3(b)
}

func g3(v float64) string { return strconv.FormatFloat(v, 'g', 3, 64) }
func g4(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

// writeCSV prints one row per curve: every parameter's estimate, SE and
// interval (bootstrap when there is one, else Wald), the EC50 and the stats.
func writeCSV(w io.Writer, results []*fit.Result) error {
	cw := csv.NewWriter(w)
	f := func(v float64) string {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return ""
		}
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	header := []string{"curve", "model", "status"}
	if len(results) > 0 {
		for _, p := range results[0].Params {
			header = append(header, p.Name, p.Name+"_se", p.Name+"_ci_lo", p.Name+"_ci_hi")
		}
	}
	header = append(header, "ec50", "ec50_ci_lo", "ec50_ci_hi", "pec50", "n", "dof", "rss", "r2", "aicc", "flags",
		"activity", "qualifier", "bound", "direction")
	if err := cw.Write(header); err != nil {
		return err
	}
	for _, r := range results {
		row := []string{r.Curve, string(r.Model), r.Status}
		for _, p := range r.Params {
			lo, hi := p.WaldLo, p.WaldHi
			if r.Boot != nil {
				lo, hi = p.BootLo, p.BootHi
			}
			row = append(row, f(p.Estimate), f(p.SE), f(lo), f(hi))
		}
		est, lo, hi := r.EC50()
		row = append(row, f(est), f(lo), f(hi), f(-math.Log10(est)), strconv.Itoa(r.N), strconv.Itoa(r.DOF),
			f(r.RSS), f(r.R2), f(r.AICc), strings.Join(r.Flags, ";"),
			string(r.Activity), r.Qualifier, f(r.Bound), string(r.Direction))
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}
