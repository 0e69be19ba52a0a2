package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"text/tabwriter"

	"sluice/api/ingest"
	"sluice/api/service"
	"sluice/api/wire"
)

// runPotential is `sluice potential FILE|-`: the POST /v1/potential
// calculation offline, from a request file (a Hill curve, not a stored one).
func runPotential(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("potential", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: sluice potential REQUEST.json|- [flags]\n\n"+
			"Predicts the steady membrane potential from a JSON request shaped as for POST /v1/potential\n"+
			"(with \"hill\": {\"log_ec50\", \"hill\", \"po_max\"}; ions in mM, agonist_conc in the request's\n"+
			"\"conc_unit\" or --unit, answers in M). Flags:\n")
		fs.PrintDefaults()
	}
	unit := fs.String("unit", "", "concentration unit of agonist_conc: M, mM, uM, nM or pM (required unless the request gives conc_unit)")
	format := fs.String("format", "table", "output: table or json")
	svg := fs.String("svg", "", "also write the plot of V and ΔV to this file")
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return 0
		}
		return 2
	}
	if len(pos) != 1 || (*format != "table" && *format != "json") {
		fs.Usage()
		return 2
	}
	in, closeIn, err := openInput(pos[0], stdin)
	if err != nil {
		fmt.Fprintf(stderr, "sluice potential: %v\n", err)
		return 2
	}
	defer closeIn()
	body, err := io.ReadAll(io.LimitReader(in, 10<<20))
	if err != nil {
		fmt.Fprintf(stderr, "sluice potential: %v\n", err)
		return 2
	}
	var req wire.PotentialRequest
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&req); err != nil {
		fmt.Fprintf(stderr, "sluice potential: %s: %v\n", pos[0], err)
		return 2
	}
	if *unit != "" {
		// The flag gives the unit the request leaves out; two different
		// units are a contradiction, not a choice.
		u, err := ingest.ParseUnit(*unit)
		if err != nil {
			fmt.Fprintf(stderr, "sluice potential: --unit: %v\n", err)
			return 2
		}
		if r, err := ingest.ParseUnit(req.ConcUnit); req.ConcUnit != "" && (err != nil || r != u) {
			fmt.Fprintf(stderr, "sluice potential: --unit %s disagrees with the request's conc_unit %q\n", *unit, req.ConcUnit)
			return 2
		}
		req.ConcUnit = u.String()
	}
	out, fig, err := service.PredictPotential(context.Background(), &req, service.Budget{}, 0, *svg != "")
	if err != nil {
		if fs := service.FieldsOf(err); len(fs) > 0 && fs[0].Pointer != "" {
			hint := ""
			if fs[0].Pointer == "/conc_unit" {
				hint = " (in the request, or with --unit)"
			}
			fmt.Fprintf(stderr, "sluice potential: %s: %v%s\n", fs[0].Pointer, err, hint)
		} else {
			fmt.Fprintf(stderr, "sluice potential: %v\n", err)
		}
		return 2
	}
	if *svg != "" {
		f, err := os.Create(*svg)
		if err != nil {
			fmt.Fprintf(stderr, "sluice potential: %v\n", err)
			return 1
		}
		werr := fig.Write(f)
		if err := errors.Join(werr, f.Close()); err != nil {
			fmt.Fprintf(stderr, "sluice potential: %v\n", err)
			return 1
		}
	}
	if *format == "json" {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(out); err != nil {
			fmt.Fprintf(stderr, "sluice potential: write: %v\n", err)
			return 1
		}
		return 0
	}
	fmt.Fprintf(stdout, "rest %.3f mV, channel reversal %.3f mV\n\n", out.RestMV, out.ChannelReversalMV)
	tw := tabwriter.NewWriter(stdout, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "agonist (M)\tP_open\tg_L (nS)\tV (mV)\tΔV (mV)\tCI of V")
	for _, p := range out.Points {
		ci := ""
		if p.CI != nil {
			ci = fmt.Sprintf("[%.2f, %.2f]", p.CI.VMV[0], p.CI.VMV[1])
		}
		fmt.Fprintf(tw, "%.3g\t%.4f\t%.4f\t%.3f\t%+.3f\t%s\n", p.AgonistConc, p.OpenFraction, p.GLigandNS, p.VMV, p.DeltaMV, ci)
	}
	tw.Flush()
	if out.ThresholdCrossed != nil {
		fmt.Fprintf(stdout, "\nthreshold crossed at %.3g M\n", *out.ThresholdCrossed)
	}
	fmt.Fprintln(stdout)
	for _, n := range out.Notes {
		fmt.Fprintln(stdout, "note: "+n)
	}
	for _, c := range out.Cautions {
		fmt.Fprintln(stdout, c)
	}
	return 0
}
