package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"
	"time"

	"sluice/api"
	"sluice/api/ingest"
	"sluice/api/wire"
)

// runSubmit is `sluice submit --server URL --token T FILES…`: post plate
// files (JSON, long CSV, or reader grids with --layout), retrying with the
// same Idempotency-Key, and with --wait show progress and a summary.
func runSubmit(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("submit", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: sluice submit --server URL --token T [flags] FILE…\n\n"+
			"Posts plate files: .json as a plate object, .csv as long CSV (well,role,compound_id,conc,value)\n"+
			"or, with --layout, as a reader grid. Flags:\n")
		fs.PrintDefaults()
	}
	server := fs.String("server", envOr(getenv, "SLUICE_SERVER", "http://127.0.0.1:8080"), "Sluice base URL (SLUICE_SERVER)")
	token := fs.String("token", getenv("SLUICE_TOKEN"), "API token with scope submit (SLUICE_TOKEN)")
	wait := fs.Bool("wait", false, "wait for the fits, show progress, print a summary")
	layout := fs.String("layout", "", "CSV files are reader grids for this saved layout")
	format := fs.String("format", "384", "CSV: plate format 96, 384 or 1536")
	assay := fs.String("assay", "", "CSV: assay ID")
	mode := fs.String("mode", "agonist", "CSV: agonist or antagonist")
	unit := fs.String("unit", "", "CSV: concentration unit M, mM, uM, nM or pM (required unless the header names it: conc_nM)")
	model := fs.String("model", "", "CSV: model (default hill)")
	resamples := fs.Int("bootstrap", 0, "CSV: bootstrap resamples (0 = none)")
	seed := fs.Uint64("seed", 1, "CSV: bootstrap seed")
	timeout := fs.Duration("timeout", 10*time.Minute, "with --wait: give up after this long")
	files, err := parseInterspersed(fs, args)
	if errors.Is(err, flag.ErrHelp) {
		return 0
	}
	if err != nil || len(files) == 0 {
		fs.Usage()
		return 2
	}
	c := &submitClient{base: strings.TrimRight(*server, "/"), token: *token, http: &http.Client{Timeout: 60 * time.Second}, log: stderr}
	failed := 0
	for _, path := range files {
		body, err := os.ReadFile(path)
		if err != nil {
			fmt.Fprintf(stderr, "sluice submit: %v\n", err)
			return 2
		}
		ctype := "application/json"
		q := url.Values{}
		if strings.EqualFold(filepath.Ext(path), ".csv") {
			ctype = "text/csv"
			if *layout == "" {
				// Refuse here what the server would: a long CSV without a unit.
				u, err := ingest.ParseUnit(*unit)
				if err != nil {
					fmt.Fprintf(stderr, "sluice submit: --unit: %v\n", err)
					return 2
				}
				if _, _, err := ingest.ReadPlateCSV(bytes.NewReader(body), u, "--unit"); errors.Is(err, ingest.ErrNoUnit) {
					fmt.Fprintf(stderr, "sluice submit: %s: %v\n", path, err)
					return 2
				}
			}
			q.Set("format", *format)
			q.Set("barcode", strings.TrimSuffix(filepath.Base(path), filepath.Ext(path)))
			q.Set("mode", *mode)
			if *unit != "" {
				q.Set("conc_unit", *unit)
			}
			for k, v := range map[string]string{"assay_id": *assay, "model": *model, "layout_id": *layout} {
				if v != "" {
					q.Set(k, v)
				}
			}
			if *resamples > 0 {
				q.Set("resamples", fmt.Sprint(*resamples))
				q.Set("seed", fmt.Sprint(*seed))
			}
		}
		acc, err := c.post("/v1/plates?"+q.Encode(), ctype, body)
		if err != nil {
			fmt.Fprintf(stderr, "sluice submit: %s: %v\n", path, err)
			failed++
			continue
		}
		fmt.Fprintf(stdout, "%s: plate %s, job %d\n", path, acc.PlateID, acc.JobID)
		if !*wait {
			continue
		}
		view, err := c.waitPlate(acc.PlateID, acc.JobID, *timeout)
		if err != nil {
			fmt.Fprintf(stderr, "sluice submit: %s: %v\n", path, err)
			failed++
			continue
		}
		printSummary(stdout, view)
		if view.Status != "done" {
			failed++
		}
	}
	if *wait {
		fmt.Fprintln(stdout, wire.Caution)
	}
	if failed > 0 {
		return 1
	}
	return 0
}

type submitClient struct {
	base, token string
	http        *http.Client
	log         io.Writer
}

type accepted struct {
	PlateID string `json:"plate_id"`
	JobID   int64  `json:"job_id"`
}

// post sends a plate, retrying transport errors, 429 and 5xx with backoff
// under one Idempotency-Key derived from the request, so a retry (even
// after this process restarts) never stores the plate twice.
func (c *submitClient) post(path, ctype string, body []byte) (*accepted, error) {
	h := sha256.New()
	fmt.Fprintf(h, "%s\n", path)
	h.Write(body)
	key := "submit-" + hex.EncodeToString(h.Sum(nil))[:32]
	var last error
	for attempt := 0; attempt < 5; attempt++ {
		if attempt > 0 {
			d := time.Duration(1<<attempt) * 200 * time.Millisecond
			fmt.Fprintf(c.log, "retrying in %v (%v)\n", d, last)
			time.Sleep(d)
		}
		req, err := http.NewRequest(http.MethodPost, c.base+path, bytes.NewReader(body))
		if err != nil {
			return nil, fmt.Errorf("--server %q: %w", c.base, err)
		}
		req.Header.Set("Content-Type", ctype)
		req.Header.Set("Idempotency-Key", key)
		if c.token != "" {
			req.Header.Set("Authorization", "Bearer "+c.token)
		}
		resp, err := c.http.Do(req)
		if err != nil {
			last = err
			continue
		}
		b, err := io.ReadAll(resp.Body)
		resp.Body.Close()
		if err != nil {
			last = fmt.Errorf("reading the answer: %w", err)
			continue
		}
		switch {
		case resp.StatusCode == http.StatusAccepted || resp.StatusCode == http.StatusOK:
			var a accepted
			if err := json.Unmarshal(b, &a); err != nil {
				return nil, fmt.Errorf("unexpected answer: %s", b)
			}
			return &a, nil
		case resp.StatusCode == http.StatusTooManyRequests || resp.StatusCode >= 500:
			last = fmt.Errorf("%s", resp.Status)
			continue
		default:
			return nil, problemText(resp.Status, b)
		}
	}
	return nil, fmt.Errorf("gave up after 5 attempts: %v", last)
}

// problemText renders a problem-details answer for a person.
func problemText(status string, b []byte) error {
	var p api.Problem
	if json.Unmarshal(b, &p) != nil || p.Title == "" {
		return fmt.Errorf("%s: %s", status, b)
	}
	var parts []string
	for _, e := range p.Errors {
		at := e.Pointer
		if e.Row > 0 {
			at = fmt.Sprintf("row %d", e.Row)
			if e.Column > 0 {
				at += fmt.Sprintf(", column %d", e.Column)
			}
		}
		if e.Parameter != "" {
			at = e.Parameter
		}
		parts = append(parts, strings.TrimSpace(at+" "+e.Detail))
	}
	if len(parts) == 0 {
		parts = append(parts, p.Detail)
	}
	return fmt.Errorf("%s: %s", status, strings.Join(parts, "; "))
}

func (c *submitClient) get(path string, v any) error {
	req, err := http.NewRequest(http.MethodGet, c.base+path, nil)
	if err != nil {
		return fmt.Errorf("--server %q: %w", c.base, err)
	}
	if c.token != "" {
		req.Header.Set("Authorization", "Bearer "+c.token)
	}
	resp, err := c.http.Do(req)
	if err != nil {
		return err
	}
	defer resp.Body.Close()
	b, err := io.ReadAll(resp.Body)
	if err != nil {
		return fmt.Errorf("reading the answer to GET %s: %w", path, err)
	}
	if resp.StatusCode != http.StatusOK {
		return problemText(resp.Status, b)
	}
	return json.Unmarshal(b, v)
}

// waitPlate polls the job, drawing a progress bar, until it ends.
func (c *submitClient) waitPlate(plateID string, jobID int64, timeout time.Duration) (*wire.PlateView, error) {
	deadline := time.Now().Add(timeout)
	for {
		var j wire.JobView
		if err := c.get(fmt.Sprintf("/v1/jobs/%d", jobID), &j); err != nil {
			return nil, err
		}
		const width = 30
		filled := 0
		if j.Progress.Total > 0 {
			filled = width * j.Progress.Done / j.Progress.Total
		}
		fmt.Fprintf(c.log, "\r  [%s%s] %d/%d curves, %s   ", strings.Repeat("#", filled), strings.Repeat("-", width-filled),
			j.Progress.Done, j.Progress.Total, j.Status)
		if j.Status == "done" || j.Status == "failed" {
			fmt.Fprintln(c.log)
			var v wire.PlateView
			if err := c.get("/v1/plates/"+plateID, &v); err != nil {
				return nil, err
			}
			if j.Status == "failed" && v.Error == "" {
				v.Error = j.Error
			}
			return &v, nil
		}
		if time.Now().After(deadline) {
			fmt.Fprintln(c.log)
			return nil, fmt.Errorf("job %d still %s after %v", jobID, j.Status, timeout)
		}
		time.Sleep(200 * time.Millisecond)
	}
}

// printSummary shows the QC verdict and each curve's potency.
func printSummary(w io.Writer, v *wire.PlateView) {
	var qc struct {
		ZPrime  float64  `json:"z_prime"`
		Pass    bool     `json:"pass"`
		Reasons []string `json:"reasons"`
	}
	json.Unmarshal(v.QC, &qc)
	verdict := "FAIL"
	if qc.Pass {
		verdict = "pass"
	}
	fmt.Fprintf(w, "plate %s (%s): %s; QC %s, Z′ %.3f", v.Barcode, v.PlateID, v.Status, verdict, qc.ZPrime)
	if len(qc.Reasons) > 0 {
		fmt.Fprintf(w, " — %s", strings.Join(qc.Reasons, "; "))
	}
	fmt.Fprintln(w)
	if v.Error != "" {
		fmt.Fprintf(w, "  error: %s\n", v.Error)
	}
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "  curve\tstatus\tactivity\tpEC50|pIC50\tEC50|IC50 (M)\t95% CI\tflags")
	for _, raw := range v.Curves {
		var pc wire.PlateCurve
		if json.Unmarshal(raw, &pc) != nil {
			continue
		}
		// An inactive curve has no potency (null, shown as -); one
		// beyond the tested range reads as the bound with its qualifier.
		pe, ec, ci := "-", "-", "-"
		if lo, hi := float64(pc.EC50.CI[0]), float64(pc.EC50.CI[1]); !math.IsNaN(lo) && !math.IsNaN(hi) {
			ci = fmt.Sprintf("[%.3g, %.3g]", lo, hi)
		}
		if !math.IsNaN(float64(pc.PEC50)) {
			pe, ec = fmt.Sprintf("%.2f", float64(pc.PEC50)), fmt.Sprintf("%.3g", float64(pc.EC50.Estimate))
			if q := pc.Qualifier; q != nil && (*q == ">" || *q == "<") && !math.IsNaN(float64(pc.Bound)) {
				pq := map[string]string{">": "<", "<": ">"}[*q]
				pe, ec = fmt.Sprintf("%s %.2f", pq, -math.Log10(float64(pc.Bound))), fmt.Sprintf("%s %.3g", *q, float64(pc.Bound))
			}
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t%s\t%s\n", pc.Key, pc.Status, pc.Activity, pe, ec, ci, strings.Join(pc.Flags, ","))
	}
	tw.Flush()
}
