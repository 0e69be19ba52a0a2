package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"sluice/api/wire"
)

// runHistory is `sluice history COMPOUND --assay A --server URL --token T
// [--format table|json|csv]`: a compound's potency history in one assay,
// as GET /v1/compounds/{id}/potency answers it.
func runHistory(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("history", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: sluice history COMPOUND --assay A --server URL --token T [--format table|json|csv]\n\n"+
			"Prints every curve of the compound in the assay, oldest experiment first, and the summary over the\n"+
			"usable runs (geometric mean, its interval, the production MSR). Flags:\n")
		fs.PrintDefaults()
	}
	server := fs.String("server", envOr(getenv, "SLUICE_SERVER", "http://127.0.0.1:8080"), "Sluice base URL (SLUICE_SERVER)")
	token := fs.String("token", getenv("SLUICE_TOKEN"), "API token with scope read (SLUICE_TOKEN)")
	assay := fs.String("assay", "", "assay ID (required)")
	format := fs.String("format", "table", "table, json or csv")
	include := fs.String("include", "all", "runs to list: all or usable")
	window := fs.Int("msr-window", 0, "usable runs of the windowed MSR (0 = the server's default, 6)")
	rest, err := parseInterspersed(fs, args)
	if errors.Is(err, flag.ErrHelp) {
		return 0
	}
	if err != nil || len(rest) != 1 || *assay == "" {
		fs.Usage()
		return 2
	}
	if *format != "table" && *format != "json" && *format != "csv" {
		fmt.Fprintf(stderr, "sluice history: --format must be table, json or csv, got %q\n", *format)
		return 2
	}
	q := url.Values{"assay_id": {*assay}, "include": {*include}}
	if *window > 0 {
		q.Set("msr_window", strconv.Itoa(*window))
	}
	u := strings.TrimRight(*server, "/") + "/v1/compounds/" + url.PathEscape(rest[0]) + "/potency?" + q.Encode()
	body, err := getWithToken(&http.Client{Timeout: 60 * time.Second}, u, *token)
	if err != nil {
		fmt.Fprintf(stderr, "sluice history: %v\n", err)
		return 1
	}
	if *format == "json" {
		stdout.Write(body)
		fmt.Fprintln(stdout)
		return 0
	}
	var h wire.PotencyHistory
	if err := json.Unmarshal(body, &h); err != nil {
		fmt.Fprintf(stderr, "sluice history: the server's answer: %v\n", err)
		return 1
	}
	if *format == "csv" {
		writeHistoryCSV(stdout, &h)
		return 0
	}
	writeHistoryTable(stdout, &h)
	return 0
}

// getWithToken GETs u and returns the body of a 200; another status is an
// error with the problem's detail.
func getWithToken(c *http.Client, u, token string) ([]byte, error) {
	req, err := http.NewRequest(http.MethodGet, u, nil)
	if err != nil {
		return nil, err
	}
	if token != "" {
		req.Header.Set("Authorization", "Bearer "+token)
	}
	resp, err := c.Do(req)
	if err != nil {
		return nil, err
	}
	defer resp.Body.Close()
	body, err := io.ReadAll(resp.Body)
	if err != nil {
		return nil, fmt.Errorf("read the answer: %w", err)
	}
	if resp.StatusCode != http.StatusOK {
		var p struct {
			Detail string `json:"detail"`
		}
		if json.Unmarshal(body, &p) == nil && p.Detail != "" {
			return nil, fmt.Errorf("%s: %s", resp.Status, p.Detail)
		}
		return nil, fmt.Errorf("%s", resp.Status)
	}
	return body, nil
}

// fmtNum prints a number to digits significant figures, "—" for null.
func fmtNum(v wire.Num, digits int) string {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return "—"
	}
	return strconv.FormatFloat(f, 'g', digits, 64)
}

func writeHistoryTable(w io.Writer, h *wire.PotencyHistory) {
	fmt.Fprintf(w, "Potency of %s in %s\n\n", h.CompoundID, h.AssayID)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "measured_at\tkind\tplate\tpEC50\tlog_ec50 interval\tcall\treview\tcounted")
	for _, r := range h.Runs {
		p := fmtNum(r.PEC50, 4)
		if r.Qualifier == ">" {
			p = "< " + p
		} else if r.Qualifier == "<" {
			p = "> " + p
		}
		review := "—"
		if r.Review != nil {
			review = r.Review.Decision
		}
		counted := "yes"
		if !r.Usable {
			counted = "no: " + r.Excluded
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t[%s, %s]\t%s\t%s\t%s\n", r.MeasuredAt, r.Kind, r.Barcode, p, fmtNum(r.LogEC50CI[0], 4),
			fmtNum(r.LogEC50CI[1], 4), r.Activity, review, counted)
	}
	tw.Flush()
	s := h.Summary
	fmt.Fprintf(w, "\n%d usable runs: geometric mean EC50 %s M [%s, %s] (%g%% t interval), mean pEC50 %s\n",
		s.N, fmtNum(s.GeoMeanEC50, 4), fmtNum(s.GeoMeanCI[0], 4), fmtNum(s.GeoMeanCI[1], 4), 100*float64(s.Confidence), fmtNum(s.PEC50Mean, 4))
	fmt.Fprintf(w, "MSR %s over the last %d usable runs, %s over all\n", fmtNum(s.MSR, 4), s.MSRRuns, fmtNum(s.MSROverall, 4))
	var ex []string
	for _, k := range []string{"superseded", "rejected", "plate_qc_failed", "inactive", "inconclusive", "qualified"} {
		if n := s.Excluded[k]; n > 0 {
			ex = append(ex, fmt.Sprintf("%s %d", k, n))
		}
	}
	if len(ex) > 0 {
		fmt.Fprintf(w, "left out: %s\n", strings.Join(ex, ", "))
	}
	fmt.Fprintf(w, "\n%s\n", wire.Caution)
}

func writeHistoryCSV(w io.Writer, h *wire.PotencyHistory) {
	cw := csv.NewWriter(w)
	_ = cw.Write([]string{"id", "kind", "assay_id", "compound_id", "measured_at", "plate_id", "barcode", "log_ec50", "log_ec50_lo",
		"log_ec50_hi", "pec50", "activity", "qualifier", "review", "usable", "excluded"})
	for _, r := range h.Runs {
		review := ""
		if r.Review != nil {
			review = r.Review.Decision
		}
		_ = cw.Write([]string{r.ID, r.Kind, r.AssayID, r.CompoundID, r.MeasuredAt, r.PlateID, r.Barcode, fmtCSV(r.LogEC50),
			fmtCSV(r.LogEC50CI[0]), fmtCSV(r.LogEC50CI[1]), fmtCSV(r.PEC50), r.Activity, r.Qualifier, review,
			strconv.FormatBool(r.Usable), r.Excluded})
	}
	cw.Flush()
	// The caution as a comment line (csv.Reader's Comment '#').
	fmt.Fprintf(w, "# %s\n", wire.Caution)
}

func fmtCSV(v wire.Num) string {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return ""
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}
