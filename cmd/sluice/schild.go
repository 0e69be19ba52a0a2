package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"strings"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/fit/schild"
)

// runSchild is `sluice schild FILE|-`: a Schild analysis offline from a CSV
// with antagonist_conc, conc and response.
func runSchild(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("schild", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: sluice schild FILE|- [flags]\n\n"+
			"Schild analysis of agonist curves at several antagonist concentrations (CSV columns\n"+
			"antagonist_conc, conc, response; antagonist_conc 0 is the control). Flags:\n")
		fs.PrintDefaults()
	}
	unit := fs.String("unit", "", "concentration unit of both agonist and antagonist: M, mM, uM, nM or pM (required unless the header names it: conc_nM)")
	resamples := fs.Int("bootstrap", 0, "bootstrap resamples for the global fit (0 = none)")
	seed := fs.Uint64("seed", 1, "bootstrap seed")
	format := fs.String("format", "table", "output: table or json")
	pos, err := parseInterspersed(fs, args)
	if errors.Is(err, flag.ErrHelp) {
		return 0
	}
	if err != nil || len(pos) != 1 || (*format != "table" && *format != "json") {
		fs.Usage()
		return 2
	}
	u, err := ingest.ParseUnit(*unit)
	if err != nil {
		fmt.Fprintf(stderr, "sluice schild: --unit: %v\n", err)
		return 2
	}
	in, closeIn, err := openInput(pos[0], stdin)
	if err != nil {
		fmt.Fprintf(stderr, "sluice schild: %v\n", err)
		return 2
	}
	defer closeIn()
	curves, err := ingest.ReadSchildCSV(in, u, "--unit")
	if err != nil {
		fmt.Fprintf(stderr, "sluice schild: %s: %v\n", pos[0], err)
		return 2
	}
	set := &schild.Settings{Resamples: *resamples, Seed: *seed}
	res, err := schild.Analyze(context.Background(), curves, set)
	if err != nil {
		fmt.Fprintf(stderr, "sluice schild: %s: %v\n", pos[0], err)
		return 2
	}
	out := wire.FromSchild(res, curves, set.Seed)
	if *format == "json" {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		enc.Encode(out)
		return 0
	}
	fmt.Fprintln(stdout, "antagonist (M)  dose ratio  CI")
	for _, d := range out.DoseRatios {
		fmt.Fprintf(stdout, "%-15.3g %-11.4g [%.4g, %.4g]\n", d.AntagonistConc, float64(d.DoseRatio), float64(d.CI[0]), float64(d.CI[1]))
	}
	if r := out.Regression; r != nil {
		fmt.Fprintf(stdout, "\nSchild regression: slope %.3f [%.3f, %.3f], pA2 %.3f [%.3f, %.3f]\n",
			float64(r.Slope.Estimate), float64(r.Slope.CI[0]), float64(r.Slope.CI[1]),
			float64(r.PA2.Estimate), float64(r.PA2.CI[0]), float64(r.PA2.CI[1]))
	}
	if g := out.Global; g != nil {
		fmt.Fprintf(stdout, "global fit: pA2 %.3f [%.3f, %.3f], slope %.3f [%.3f, %.3f], P(s = 1) %.3g\n",
			float64(g.PA2.Estimate), float64(g.PA2.CI[0]), float64(g.PA2.CI[1]),
			float64(g.Slope.Estimate), float64(g.Slope.CI[0]), float64(g.Slope.CI[1]), float64(g.SlopeUnityP))
		if g.PKB != nil {
			fmt.Fprintf(stdout, "pKB %.3f [%.3f, %.3f]\n", float64(g.PKB.Estimate), float64(g.PKB.CI[0]), float64(g.PKB.CI[1]))
		} else {
			fmt.Fprintln(stdout, "pKB withheld: a Schild slope of 1 is rejected")
		}
	}
	fmt.Fprintf(stdout, "competitive: %v", out.Competitive)
	if len(out.Flags) > 0 {
		fmt.Fprintf(stdout, "; flags: %s", strings.Join(out.Flags, ", "))
	}
	fmt.Fprintln(stdout)
	if out.Withheld != "" {
		fmt.Fprintf(stdout, "pA2 and pKB withheld: %s\n", out.Withheld)
	}
	if cp := out.ChengPrusoff; cp != nil {
		fmt.Fprintf(stdout, "IC50 at %.3g M agonist: %.3g M (pIC50 %.2f); Cheng–Prusoff KB %.3g M (pKB %.2f)\n  %s\n",
			cp.AgonistConc, cp.IC50, cp.PIC50, cp.KB, cp.PKB, cp.Note)
	}
	fmt.Fprintln(stdout, "\n"+out.Caution)
	return 0
}
