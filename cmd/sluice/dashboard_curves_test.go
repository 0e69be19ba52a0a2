package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"net/url"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// apiGet reads an API answer as the admin, failing the test unless 200.
func apiGet(t *testing.T, d *demoServer, path string, out any) string {
	t.Helper()
	req, err := http.NewRequest(http.MethodGet, d.Base+path, nil)
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+d.Admin)
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	body, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	if resp.StatusCode != http.StatusOK {
		t.Fatalf("GET %s: %d %s", path, resp.StatusCode, body)
	}
	if out != nil {
		if err := json.Unmarshal(body, out); err != nil {
			t.Fatalf("GET %s: %v", path, err)
		}
	}
	return string(body)
}

// apiHistory is the part of GET /v1/compounds/{id}/potency (one history
// per assay) the checks compare with the page.
type apiHistory struct {
	Assays []struct {
		AssayID string `json:"assay_id"`
		Runs    []struct {
			ID      string `json:"id"`
			Kind    string `json:"kind"`
			Usable  bool   `json:"usable"`
			RefitOf string `json:"refit_of"`
		} `json:"runs"`
		Summary struct {
			N           int     `json:"n"`
			GeoMeanEC50 float64 `json:"geo_mean_ec50"`
			PEC50Mean   float64 `json:"pec50_mean"`
		} `json:"summary"`
	} `json:"assays"`
}

func refHistory(t *testing.T, d *demoServer) apiHistory {
	t.Helper()
	var h apiHistory
	apiGet(t, d, "/v1/compounds/demo-ref/potency", &h)
	for _, a := range h.Assays {
		if a.AssayID == demoAssay {
			h.Assays = append(h.Assays[:0], a)
		}
	}
	if len(h.Assays) != 1 || h.Assays[0].Summary.N < 3 {
		t.Fatalf("the demo's reference history: %+v", h)
	}
	return h
}

// apiCurve is the part of GET /v1/curves/{id} the checks read.
type apiCurve struct {
	ID         string          `json:"id"`
	RefitOf    string          `json:"refit_of"`
	Superseded bool            `json:"superseded"`
	Exclusions json.RawMessage `json:"exclusions"`
	Reviews    []struct {
		Decision string `json:"decision"`
		Reason   string `json:"reason"`
		By       string `json:"by"`
	} `json:"reviews"`
}

// molarUnits read a concentration as the page shows it ("301 nM").
var molarUnits = map[string]float64{"M": 1, "mM": 1e-3, "µM": 1e-6, "nM": 1e-9, "pM": 1e-12, "fM": 1e-15}

// shownMolar reads "301 nM" as molar and the half-unit of its last digit.
func shownMolar(t *testing.T, s string) (v, halfULP float64) {
	t.Helper()
	num, unit, ok := strings.Cut(strings.TrimSpace(s), " ")
	f, err := strconv.ParseFloat(num, 64)
	if !ok || err != nil || molarUnits[unit] == 0 {
		t.Fatalf("not a concentration: %q", s)
	}
	dec := 0
	if _, frac, ok := strings.Cut(num, "."); ok {
		dec = len(frac)
	}
	return f * molarUnits[unit], 0.5 * math.Pow(10, -float64(dec)) * molarUnits[unit]
}

// checkCompounds: the compound list links to the compounds and filters by
// id; a bad search is a 400 page naming the parameter.
func checkCompounds(t *testing.T, d *demoServer, b *browser, engine string) {
	b.visit("/compounds")
	b.shot(engine + "-compounds")
	all := b.count("#compounds tbody tr")
	if all < 2 || b.count(`#compounds a[href="/compounds/demo-ref"]`) != 1 {
		t.Fatalf("the list has %d compounds, demo-ref linked %d times", all, b.count(`#compounds a[href="/compounds/demo-ref"]`))
	}
	b.visit("/compounds?q=REF")
	if n := b.count("#compounds tbody tr"); n < 1 || n >= all || b.count(`#compounds a[href="/compounds/demo-ref"]`) != 1 {
		t.Errorf("searching REF leaves %d of %d compounds", n, all)
	}
	for i := range b.count("#compounds tbody tr") {
		row := eval[string](b, fmt.Sprintf(`document.querySelectorAll("#compounds tbody tr")[%d].textContent`, i))
		if !strings.Contains(strings.ToLower(row), "ref") {
			t.Errorf("row %q does not match REF", row)
		}
	}
	// A refused page is expected: the browser's log of it is forgotten.
	b.expect = http.StatusBadRequest
	b.do("too long a search", chromedp.Navigate(b.base+"/compounds?q="+url.QueryEscape(strings.Repeat("x", 101))),
		chromedp.WaitReady(chromedp.CSS("body")))
	b.settle()
	b.forget("status of 400")
	b.clean("too long a search")
	b.expect = 0
	if got := b.text("main"); !strings.Contains(got, "parameter q") {
		t.Errorf("a too long search answers %q", got)
	}
	// The search box is labelled and keeps the search.
	b.visit("/compounds?q=demo-ref")
	if b.count(`label[for="q"]`) != 1 || eval[string](b, `document.getElementById("q").value`) != "demo-ref" {
		t.Error("the search box is unlabelled or forgets the search")
	}
}

// checkCompound: the reference compound's page shows its history chart,
// and its summary equals the API's to the digits shown.
func checkCompound(t *testing.T, d *demoServer, b *browser, engine string) {
	h := refHistory(t, d)
	s := h.Assays[0].Summary
	b.visit("/compounds/demo-ref")
	b.shot(engine + "-compound")
	sec := `section[data-assay="` + demoAssay + `"]`
	if b.count(sec) != 1 {
		t.Fatalf("no history section for %s", demoAssay)
	}
	// The chart is the API's drawing, loaded (a failed image fails the page).
	if w := eval[int](b, `document.querySelector('`+sec+` figure img').naturalWidth`); w == 0 {
		t.Error("the history chart did not load")
	}
	geo, half := shownMolar(t, strings.Fields(b.text(sec + " .geomean"))[0]+" "+strings.Fields(b.text(sec + " .geomean"))[1])
	if math.Abs(geo-s.GeoMeanEC50) > half*(1+1e-9) {
		t.Errorf("geometric mean EC50 shown %g M, the API says %g M (shown to ±%g)", geo, s.GeoMeanEC50, half)
	}
	if got, want := b.text(sec+" .pec50-mean"), strconv.FormatFloat(s.PEC50Mean, 'f', 2, 64); got != want {
		t.Errorf("mean pEC50 shown %q, the API's %q", got, want)
	}
	if got := b.text(sec + " .n"); !strings.HasPrefix(got, strconv.Itoa(s.N)+" of "+strconv.Itoa(len(h.Assays[0].Runs))) {
		t.Errorf("n shown %q, the API's %d of %d", got, s.N, len(h.Assays[0].Runs))
	}
	// Every run is a row linking to its curve; the demo's rejected and
	// refitted runs say why they are left out.
	if n := b.count(sec + " table.runs tbody tr"); n != len(h.Assays[0].Runs) {
		t.Errorf("%d run rows, the API has %d runs", n, len(h.Assays[0].Runs))
	}
	body := b.text(sec)
	for _, want := range []string{"rejected on review", "a refit of this curve replaced it"} {
		if !strings.Contains(body, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
	if b.count(sec+` a[href="/curves/`+h.Assays[0].Runs[0].ID+`"]`) != 1 {
		t.Error("the first run does not link to its curve")
	}
	// A plate curve's points are its wells, as many as the API's plot of
	// it draws.
	var plateRun string
	for _, r := range h.Assays[0].Runs {
		if r.Kind == "plate_curve" && r.Usable {
			plateRun = r.ID
		}
	}
	if plateRun == "" {
		t.Fatal("the demo's reference history has no usable plate curve")
	}
	b.visit("/curves/" + plateRun)
	svg := apiGet(t, d, "/v1/curves/"+plateRun+"/plot.svg", nil)
	if n, want := b.count("#points tbody tr"), strings.Count(svg, `fill="#252525"/>`); n != want || n < 5 {
		t.Errorf("the plate curve's page lists %d points, the API's plot draws %d", n, want)
	}
	well := b.text("#points tbody tr:last-child td:nth-child(2)")
	if ok, _ := regexp.MatchString(`^[A-P][0-9]{1,2}\b`, well); !ok {
		t.Errorf("a plate curve's point is named %q, not by its well", well)
	}
	// At tablet width the plot and the summary stack and nothing spills
	// sideways beyond the page.
	b.do("tablet width", chromedp.EmulateViewport(768, 1000))
	b.visit("/curves/" + plateRun)
	b.shot(engine + "-curve-768")
	if w := eval[int](b, "document.documentElement.scrollWidth"); w > 768 {
		t.Errorf("at 768 px the curve page is %d px wide", w)
	}
	b.do("desktop width", chromedp.EmulateViewport(1280, 800))
}

// usableFit is a usable single fit of demo-ref not yet refitted, the
// k-th from the newest.
func usableFit(t *testing.T, h apiHistory, k int) string {
	t.Helper()
	runs := h.Assays[0].Runs
	for i := len(runs) - 1; i >= 0; i-- {
		if r := runs[i]; r.Usable && r.Kind == "fit" && r.RefitOf == "" {
			if k == 0 {
				return r.ID
			}
			k--
		}
	}
	t.Fatal("no usable single fit of demo-ref")
	return ""
}

// submitForm fills and submits a page's form and waits for the next page
// (a new document, loaded); expect is the status that page may answer (0:
// < 400), whose browser log line is then forgotten.
func submitForm(b *browser, expect int64, form string, steps ...chromedp.Action[chromedp.Void]) {
	b.t.Helper()
	b.mu.Lock()
	b.expect = expect
	b.mu.Unlock()
	before := eval[string](b, "String(performance.timeOrigin)")
	b.do("submit "+form, append(steps, chromedp.Submit(chromedp.CSS(form)))...)
	// While the next document replaces this one an evaluation can fail:
	// ask again until the new one is complete.
	deadline := time.Now().Add(30 * time.Second)
	for {
		ctx, cancel := context.WithTimeout(b.ctx, 5*time.Second)
		state, err := chromedp.Run(ctx, chromedp.Evaluate[string](`String(performance.timeOrigin) + "|" + document.readyState`))
		cancel()
		if err == nil && state != before+"|complete" && strings.HasSuffix(state, "|complete") {
			break
		}
		if time.Now().After(deadline) {
			b.t.Fatalf("submit %s: no new page (%q, %v)", form, state, err)
		}
		time.Sleep(50 * time.Millisecond)
	}
	if expect != 0 {
		b.forget(fmt.Sprintf("status of %d", expect))
	}
	b.mu.Lock()
	b.expect = 0
	b.mu.Unlock()
}

// checkCurveReview: the curve page shows the curve, its parameters and
// flags in words; rejecting without a reason is refused with the form's
// words kept; rejecting with one through the form takes the curve out of
// the compound's summary (n drops by one, the API agrees).
func checkCurveReview(t *testing.T, d *demoServer, b *browser, engine string) {
	h := refHistory(t, d)
	id := usableFit(t, h, 0)
	b.visit("/curves/" + id)
	b.shot(engine + "-curve")
	if got := b.text("#curve-id"); got != id {
		t.Errorf("curve id shown %q", got)
	}
	if w := eval[int](b, `document.querySelector('figure img').naturalWidth`); w == 0 {
		t.Error("the curve's plot did not load")
	}
	if n := b.count("#params tbody tr"); n != 4 {
		t.Errorf("%d parameter rows, want the Hill equation's 4", n)
	}
	if b.count("#review-form") != 1 || b.count("#refit-form") != 1 {
		t.Fatal("an admin sees no review or refit form")
	}
	// Each control has its label.
	for _, id := range []string{"decide-accept", "decide-reject", "review-reason", "refit-reason", "pt-0"} {
		if b.count(`label[for="`+id+`"]`) != 1 {
			t.Errorf("control %s has no label", id)
		}
	}
	// Reject without a reason: 422, the page again with why, nothing stored.
	submitForm(b, http.StatusUnprocessableEntity, "#review-form", chromedp.Click(chromedp.ID("decide-reject")))
	b.clean("reject without a reason")
	if got := b.text("#form-problem"); !strings.Contains(got, "reason is required") {
		t.Errorf("rejecting without a reason shows %q", got)
	}
	var cv apiCurve
	apiGet(t, d, "/v1/curves/"+id, &cv)
	if len(cv.Reviews) != 0 {
		t.Fatalf("a refused review was stored: %+v", cv.Reviews)
	}
	// Reject with a reason.
	submitForm(b, 0, "#review-form", chromedp.Click(chromedp.ID("decide-reject")),
		chromedp.SendKeys(chromedp.ID("review-reason"), "dye precipitated in column 5"))
	b.clean("reject")
	if got := eval[string](b, "location.pathname"); got != "/curves/"+id {
		t.Errorf("after the review the browser is at %s", got)
	}
	if got := b.text("#review-state"); !strings.Contains(got, "rejected") || !strings.Contains(got, "dye precipitated") {
		t.Errorf("review state shown %q", got)
	}
	apiGet(t, d, "/v1/curves/"+id, &cv)
	if len(cv.Reviews) != 1 || cv.Reviews[0].Decision != "rejected" || cv.Reviews[0].Reason != "dye precipitated in column 5" {
		t.Errorf("the API's reviews: %+v", cv.Reviews)
	}
	after := refHistory(t, d)
	if got, want := after.Assays[0].Summary.N, h.Assays[0].Summary.N-1; got != want {
		t.Errorf("after rejecting, the API's n is %d, want %d", got, want)
	}
	b.visit("/compounds/demo-ref")
	sec := `section[data-assay="` + demoAssay + `"]`
	if got := b.text(sec + " .n"); !strings.HasPrefix(got, strconv.Itoa(h.Assays[0].Summary.N-1)+" of ") {
		t.Errorf("after rejecting, the page's n is %q, want %d", got, h.Assays[0].Summary.N-1)
	}
}

// checkCurveRefit: leaving a point out through the form opens the new
// version (one point fewer, the API agrees), which links back; the old
// version says it is superseded and by which.
func checkCurveRefit(t *testing.T, d *demoServer, b *browser, engine string) {
	h := refHistory(t, d)
	id := usableFit(t, h, 1)
	b.visit("/curves/" + id)
	points := b.count("#points tbody tr")
	label := b.text(`label[for="pt-3"]`)
	submitForm(b, 0, "#refit-form", chromedp.Click(chromedp.ID("pt-3")),
		chromedp.SendKeys(chromedp.ID("refit-reason"), "tip touched the well"))
	b.clean("refit")
	next := strings.TrimPrefix(eval[string](b, "location.pathname"), "/curves/")
	if next == id || next == "" {
		t.Fatalf("after the refit the browser is at /curves/%s", next)
	}
	b.shot(engine + "-curve-refit")
	if b.count(`#refit-of a[href="/curves/`+id+`"]`) != 1 {
		t.Errorf("the new version does not say it is a refit of %s", id)
	}
	if got := b.count("#points tbody tr:not(.left-out)"); got != points-1 {
		t.Errorf("the new version has %d points, the old %d", got, points)
	}
	if got := b.text("#points tr.left-out"); !strings.Contains(got, "left out") {
		t.Errorf("the left-out point is not listed: %q", got)
	}
	var nc apiCurve
	apiGet(t, d, "/v1/curves/"+next, &nc)
	if nc.RefitOf != id || string(nc.Exclusions) != "[3]" {
		t.Errorf("the API's new version: refit_of %q exclusions %s (the form's point: %q)", nc.RefitOf, nc.Exclusions, label)
	}
	svg := apiGet(t, d, "/v1/curves/"+next+"/plot.svg", nil)
	if filled, hollow := strings.Count(svg, `fill="#252525"/>`), strings.Count(svg, `<circle class="excluded"`); filled != points-1 || hollow != 1 {
		t.Errorf("the API's plot of the new version: %d filled and %d hollow points, want %d and 1", filled, hollow, points-1)
	}
	b.visit("/curves/" + id)
	if b.count(`#superseded a[href="/curves/`+next+`"]`) != 1 {
		t.Errorf("the old version does not say it is superseded by %s", next)
	}
	if b.count("#refit-form") != 0 {
		t.Error("a superseded version still offers a refit")
	}
}

// checkCurveRefusals: a POST without the csrf field is refused; a read
// session sees no forms, and its forged POSTs (with its own csrf) get
// the 403 page with nothing stored.
func checkCurveRefusals(t *testing.T, d *demoServer, b *browser, engine string) {
	h := refHistory(t, d)
	id := usableFit(t, h, 2)
	b.visit("/curves/" + id)
	post := func(b *browser, path, body string) (int, string) {
		t.Helper()
		type answer struct {
			Status int    `json:"status"`
			Text   string `json:"text"`
		}
		a := evalAwait[answer](b, fmt.Sprintf(`fetch(%q, {method: "POST", headers: {"Content-Type": "application/x-www-form-urlencoded"},
			body: %q, redirect: "manual"}).then(async r => ({status: r.status, text: await r.text()}))`, path, body))
		b.forget(path)
		return a.Status, a.Text
	}
	if st, _ := post(b, "/curves/"+id+"/review", "decision=rejected&reason=no+token"); st != http.StatusForbidden {
		t.Errorf("a review without csrf: %d, want 403", st)
	}
	if st, _ := post(b, "/curves/"+id+"/refit", "exclude=1&reason=no+token"); st != http.StatusForbidden {
		t.Errorf("a refit without csrf: %d, want 403", st)
	}

	rb := newBrowser(t, d.Base)
	rb.signIn(d.Read)
	rb.visit("/curves/" + id)
	rb.shot(engine + "-curve-read")
	if n := rb.count("#review-form") + rb.count("#refit-form") + rb.count(`#points input[type="checkbox"]`); n != 0 {
		t.Errorf("a read session sees %d form parts", n)
	}
	csrf := eval[string](rb, `document.querySelector('input[name="csrf"]').value`)
	if csrf == "" {
		t.Fatal("no csrf on the page")
	}
	st, text := post(rb, "/curves/"+id+"/review", "csrf="+url.QueryEscape(csrf)+"&decision=rejected&reason=forged")
	if st != http.StatusForbidden || !strings.Contains(text, "Nothing was changed") {
		t.Errorf("a read session's review: %d %.200q, want the 403 page", st, text)
	}
	st, _ = post(rb, "/curves/"+id+"/refit", "csrf="+url.QueryEscape(csrf)+"&exclude=1&reason=forged")
	if st != http.StatusForbidden {
		t.Errorf("a read session's refit: %d, want 403", st)
	}
	rb.clean("read session")
	var cv apiCurve
	apiGet(t, d, "/v1/curves/"+id, &cv)
	if len(cv.Reviews) != 0 || cv.Superseded {
		t.Errorf("refused POSTs stored something: reviews %+v, superseded %v", cv.Reviews, cv.Superseded)
	}
	b.clean("refusals")
}
