package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"os"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"sluice/api/wire"
)

// apiJSON calls the demo's API with the admin token and decodes a 200
// answer into out.
func apiJSON(t *testing.T, d *demoServer, method, path string, body []byte, out any) {
	t.Helper()
	req, err := http.NewRequest(method, d.Base+path, bytes.NewReader(body))
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+d.Admin)
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	raw, _ := io.ReadAll(resp.Body)
	if resp.StatusCode != http.StatusOK {
		t.Fatalf("%s %s: %d %s", method, path, resp.StatusCode, raw)
	}
	if err := json.Unmarshal(raw, out); err != nil {
		t.Fatalf("%s %s: %v", method, path, err)
	}
}

// checkDrift: /drift lists every chart of the demo assay with the status
// GET /v1/drift gives it, the demo's creeping min control among the
// out-of-control ones, with its latest violation.
func checkDrift(t *testing.T, d *demoServer, b *browser, engine string) {
	var o wire.DriftOverview
	apiJSON(t, d, "GET", "/v1/drift", nil, &o)
	b.visit("/drift")
	b.shot(engine + "-drift")
	if got := b.text("h1"); got != "Drift" {
		t.Errorf("heading %q", got)
	}
	out := 0
	for _, ch := range o.Charts {
		if ch.AssayID != "lgx7-vm-dye" {
			continue
		}
		row := fmt.Sprintf(`#drift-%s ~ table tr[data-metric=%q]`, ch.AssayID, ch.Metric)
		if b.count(row) != 1 {
			t.Errorf("/drift has no row for %s %s", ch.AssayID, ch.Metric)
			continue
		}
		if got := b.text(row + " .badge"); got != ch.Status {
			t.Errorf("%s: /drift shows %q, GET /v1/drift %q", ch.Metric, got, ch.Status)
		}
		if v := ch.LatestViolation; v != nil {
			if got := b.text(row + " td:nth-child(3)"); got != v.Rule {
				t.Errorf("%s: latest violation %q, GET /v1/drift %q", ch.Metric, got, v.Rule)
			}
		}
		if ch.Status == "out_of_control" {
			out++
		}
	}
	// The demo's min control creeps from day 29 (cmd/sluice/demo_drift.go).
	if out == 0 || b.count(`tr[data-metric="min_control_mean"] .badge.out_of_control`) != 1 {
		t.Errorf("the demo's drifting min control is not out of control on /drift (%d out-of-control charts)", out)
	}
	if b.count(`a[href="/assays/lgx7-vm-dye/drift"]`) == 0 {
		t.Errorf("/drift does not link to the assay's charts")
	}
}

// checkAssayDrift: the assay's page has one chart (a drawn figure in a
// section named by the metric) per metric GET /v1/assays/{id}/drift
// knows, with the API's status, baseline and violations; a date range
// narrows the points; a bad date is a 400 naming the parameter.
func checkAssayDrift(t *testing.T, d *demoServer, b *browser, engine string) {
	const assay = "lgx7-vm-dye"
	b.visit("/assays/" + assay + "/drift")
	b.shot(engine + "-assay-drift")
	metrics := []string{"z_prime", "signal_window", "max_control_mean", "max_control_cv", "min_control_mean", "min_control_cv",
		"reference_pec50", "r4s"}
	if n := b.count("section.chart"); n != len(metrics) {
		t.Errorf("%d chart sections, want one per metric (%d)", n, len(metrics))
	}
	for _, m := range metrics {
		var ch wire.DriftChart
		apiJSON(t, d, "GET", "/v1/assays/"+assay+"/drift?metric="+m, nil, &ch)
		sec := "section#" + m
		if b.count(sec+" figure svg") != 1 {
			t.Errorf("%s: no figure", m)
			continue
		}
		if got := b.text(sec + " h2 .badge"); got != ch.Status {
			t.Errorf("%s: status %q, the API's %q", m, got, ch.Status)
		}
		var broke []string
		for i := len(ch.Points) - 1; i >= 0; i-- {
			if p := ch.Points[i]; len(p.Violations) > 0 {
				broke = append(broke, p.Barcode+" "+strings.Join(p.Violations, ", "))
			}
		}
		got := eval[[]string](b, fmt.Sprintf(`Array.from(document.querySelectorAll(%q)).map(tr => tr.cells[1].textContent.trim() + " " + tr.cells[0].textContent.trim())`,
			sec+" table.violations tbody tr"))
		if strings.Join(got, "; ") != strings.Join(broke, "; ") {
			t.Errorf("%s: the plates listed as breaking rules are\n%v\nthe API's\n%v", m, got, broke)
		}
		if bl := ch.Baseline; bl != nil {
			// Shown to three significant figures (sig): within half a
			// unit of the third digit of the API's values.
			var mean, sd float64
			got := strings.ReplaceAll(b.text(sec+" dl.facts dd"), "−", "-")
			if _, err := fmt.Sscanf(got, "mean %g, SD %g", &mean, &sd); err != nil {
				t.Errorf("%s: baseline %q: %v", m, got, err)
			} else if !near3(mean, float64(bl.Mean)) || !near3(sd, float64(bl.SD)) {
				t.Errorf("%s: baseline %q, the API's mean %g, SD %g", m, got, float64(bl.Mean), float64(bl.SD))
			}
		}
	}
	if b.count("section#min_control_mean table.violations tbody tr") == 0 {
		t.Errorf("the drifting min control lists no violation")
	}
	// #metric jumps to that chart.
	b.visit("/assays/" + assay + "/drift#z_prime")
	if y := eval[float64](b, `document.getElementById("z_prime").getBoundingClientRect().top`); math.Abs(y) > 20 {
		t.Errorf("#z_prime does not scroll its chart to the top (top at %.0f px)", y)
	}
	// A week from the demo's first control plate (demoDriftStart): the
	// chart shows the points the API gives for that range.
	first := demoDriftStart.Format(time.DateOnly)
	last := demoDriftStart.AddDate(0, 0, 6).Format(time.DateOnly)
	b.visit("/assays/" + assay + "/drift?from=" + first + "&to=" + last)
	var week wire.DriftChart
	apiJSON(t, d, "GET", "/v1/assays/"+assay+"/drift?metric=z_prime&from="+first+"T00:00:00Z&to="+
		demoDriftStart.AddDate(0, 0, 7).Format(time.DateOnly)+"T00:00:00Z", nil, &week)
	// Each point of the Levey–Jennings panel is a circle with its title
	// (api/plot/drift.go).
	if got := b.count("section#z_prime svg circle > title"); len(week.Points) == 0 || got != len(week.Points) {
		t.Errorf("a week of z_prime: %d points drawn, the API has %d", got, len(week.Points))
	}
	if n := b.count("section#z_prime table.violations tbody tr"); n > len(week.Points) {
		t.Errorf("a week of z_prime lists %d plates breaking rules, more than its %d points", n, len(week.Points))
	}
	if got := eval[string](b, `document.getElementById("from").value`); got != first {
		t.Errorf("the from field shows %q after filtering", got)
	}
	b.visitExpect("/assays/"+assay+"/drift?from=yesterday", http.StatusBadRequest)
	if body := b.text("main"); !strings.Contains(body, "from") || !strings.Contains(body, "yesterday") {
		t.Errorf("a bad from date: the error page says %q", body)
	}
}

// near3 tells whether shown is want to three significant figures.
func near3(shown, want float64) bool {
	return math.Abs(shown-want) <= 0.005*math.Abs(want)+1e-12
}

// checkPotential: the calculator's example is the demo's potential
// request (testdata/demo/potential-neuron.json); its V and ΔV equal POST
// /v1/potential's to the digit shown; a negative conductance shows the
// error next to the form with 422 and marks the field.
func checkPotential(t *testing.T, d *demoServer, b *browser, engine string) {
	raw, err := os.ReadFile("../../testdata/demo/potential-neuron.json")
	if err != nil {
		t.Fatal(err)
	}
	var api wire.PotentialResponse
	apiJSON(t, d, "POST", "/v1/potential", raw, &api)
	b.visit("/potential")
	if b.count("table#points") != 0 {
		t.Errorf("the empty form already shows a prediction")
	}
	b.do("predict", chromedp.Click(chromedp.CSS(`form.calc button[type=submit]`)), chromedp.WaitReady(chromedp.CSS("table#points")))
	b.settle()
	b.clean("predict")
	b.shot(engine + "-potential")
	if b.count("section figure svg") != 1 {
		t.Errorf("no figure")
	}
	vs := eval[[]string](b, `Array.from(document.querySelectorAll("table#points tbody td.v")).map(td => td.textContent.trim())`)
	dvs := eval[[]string](b, `Array.from(document.querySelectorAll("table#points tbody td.dv")).map(td => td.firstChild.textContent.trim())`)
	if len(vs) != len(api.Points) || len(dvs) != len(api.Points) {
		t.Fatalf("%d V and %d ΔV rows, POST /v1/potential has %d points", len(vs), len(dvs), len(api.Points))
	}
	for i, p := range api.Points {
		if want := oneDecimal(p.VMV); vs[i] != want {
			t.Errorf("point %d: V %s, the API's %s (%g)", i, vs[i], want, p.VMV)
		}
		want := oneDecimal(p.DeltaMV)
		if !strings.HasPrefix(want, "−") && want != "0.0" {
			want = "+" + want
		}
		if dvs[i] != want {
			t.Errorf("point %d: ΔV %s, the API's %s (%g)", i, dvs[i], want, p.DeltaMV)
		}
	}
	if got, want := b.text("#rest"), oneDecimal(api.RestMV)+" mV"; got != want {
		t.Errorf("rest %q, the API's %q", got, want)
	}
	if api.ThresholdCrossed == nil || !strings.HasPrefix(b.text("#crossing"), "reached at") {
		t.Errorf("threshold crossing: the API %v, the page %q", api.ThresholdCrossed, b.text("#crossing"))
	}
	// A negative conductance: the model's refusal next to the form.
	b.visitExpect("/potential?preset=neuron&count=200&conductance_ps=-5&p_na=1&p_k=1&log_ec50=-5&hill=1.5&po_max=0.8&agonist_conc=1,10&conc_unit=%C2%B5M", http.StatusUnprocessableEntity)
	b.shot(engine + "-potential-error")
	if got := b.text("form.calc #problem"); !strings.Contains(got, "conductance") {
		t.Errorf("the error next to the form says %q", got)
	}
	if got := eval[string](b, `document.querySelector("form.calc #problem").dataset.status`); got != "422" {
		t.Errorf("the problem's status %s, want 422", got)
	}
	if got := eval[string](b, `document.getElementById("conductance_ps").getAttribute("aria-invalid")`); got != "true" {
		t.Errorf("the conductance field is not marked invalid")
	}
	if got := eval[string](b, `document.getElementById("conductance_ps").value`); got != "-5" {
		t.Errorf("the form lost the value typed: %q", got)
	}
	// A value that is not a number: 400 naming the field.
	b.visitExpect("/potential?preset=neuron&count=lots&conductance_ps=50&reversal_mv=0&log_ec50=-5&hill=1&po_max=1&agonist_conc=1&conc_unit=nM", http.StatusBadRequest)
	if got := b.text("form.calc #problem"); !strings.Contains(got, "count") {
		t.Errorf("a count that is not a number: %q", got)
	}
}

// oneDecimal is how the calculator shows millivolts.
func oneDecimal(v float64) string {
	s := strconv.FormatFloat(v, 'f', 1, 64)
	if s == "-0.0" {
		s = "0.0"
	}
	return strings.Replace(s, "-", "−", 1)
}

// a11yPaths are the pages the accessibility and layout check visits; a
// page another part of the dashboard has not landed yet (404) is
// skipped, saying so.
var a11yPaths = []string{"/", "/drift", "/assays/lgx7-vm-dye/drift", "/potential",
	"/potential?count=200&conductance_ps=-1&reversal_mv=0&log_ec50=-5&hill=1&po_max=1&agonist_conc=1&conc_unit=nM",
	"/plates", "/compounds", "/compounds/demo-ref"}

// checkAccessibility: on every page, every form control has a label (a
// <label for>, an enclosing label, or aria-label), and at 768 px wide the
// page does not overflow sideways.
func checkAccessibility(t *testing.T, d *demoServer, b *browser, engine string) {
	unlabelled := `Array.from(document.querySelectorAll("input:not([type=hidden]), select, textarea")).filter(el =>
		!(el.labels && el.labels.length) && !el.getAttribute("aria-label") && !el.getAttribute("aria-labelledby")).map(el => el.outerHTML)`
	overflow := `[document.body.scrollWidth, document.body.clientWidth, document.documentElement.scrollWidth, document.documentElement.clientWidth]`
	statuses := map[string]int{}
	for _, p := range a11yPaths {
		statuses[p] = evalAwait[int](b, fmt.Sprintf("fetch(%q).then(r => r.status)", p))
		if statuses[p] >= 400 {
			b.forget(p)
		}
		if statuses[p] == http.StatusNotFound {
			t.Logf("%s is not served yet (404): skipped", p)
		}
	}
	for _, width := range []int64{1280, 768} {
		b.do("viewport", chromedp.EmulateViewport(width, 800))
		for _, p := range a11yPaths {
			if statuses[p] == http.StatusNotFound {
				continue
			}
			expect := int64(0)
			if statuses[p] >= 400 {
				expect = int64(statuses[p])
			}
			b.visitExpect(p, expect)
			if bad := eval[[]string](b, unlabelled); len(bad) > 0 {
				t.Errorf("%s: controls without a label: %v", p, bad)
			}
			if w := eval[[]int](b, overflow); w[0] > w[1] || w[2] > w[3] {
				t.Errorf("%s at %d px: the page overflows sideways (body %d > %d, document %d > %d)", p, width, w[0], w[1], w[2], w[3])
			}
			if width == 768 && (p == "/assays/lgx7-vm-dye/drift" || p == "/potential") {
				b.shot(engine + "-768" + strings.ReplaceAll(p, "/", "-"))
			}
		}
	}
	b.do("viewport", chromedp.EmulateViewport(1280, 800))
}
