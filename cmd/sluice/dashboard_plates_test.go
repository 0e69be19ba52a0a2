package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"io"
	"math"
	"net/http"
	"net/url"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/chromedp/chromedp"

	"sluice/api/wire"
)

// platesAPI calls the API with the demo's admin token and decodes the
// JSON answer into out; want is the status expected.
func platesAPI(t *testing.T, d *demoServer, method, path string, body any, want int, out any) {
	t.Helper()
	var rd io.Reader
	if body != nil {
		b, err := json.Marshal(body)
		if err != nil {
			t.Fatal(err)
		}
		rd = bytes.NewReader(b)
	}
	req, err := http.NewRequest(method, d.Base+path, rd)
	if err != nil {
		t.Fatal(err)
	}
	req.Header.Set("Authorization", "Bearer "+d.Admin)
	req.Header.Set("Content-Type", "application/json")
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer resp.Body.Close()
	raw, err := io.ReadAll(resp.Body)
	if err != nil {
		t.Fatal(err)
	}
	if resp.StatusCode != want {
		t.Fatalf("%s %s: %d, want %d: %s", method, path, resp.StatusCode, want, raw)
	}
	if err := json.Unmarshal(raw, out); err != nil {
		t.Fatalf("%s %s: %v", method, path, err)
	}
}

// demoPlateByBarcode is the demo plate with the barcode, as the API
// lists it.
func demoPlateByBarcode(t *testing.T, d *demoServer, barcode string) (wire.PlateView, wire.PlateQC) {
	t.Helper()
	var list wire.PlateList
	platesAPI(t, d, "GET", "/v1/plates?barcode="+url.QueryEscape(barcode), nil, http.StatusOK, &list)
	if len(list.Plates) != 1 {
		t.Fatalf("the API lists %d plates with barcode %s, want 1", len(list.Plates), barcode)
	}
	var v wire.PlateView
	var qc wire.PlateQC
	if err := json.Unmarshal(list.Plates[0], &v); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(v.QC, &qc); err != nil {
		t.Fatal(err)
	}
	return v, qc
}

// checkPlates: /plates lists the API's plates newest first a page at a
// time, the search by barcode finds exactly that plate, and a malformed
// date is a 400 page naming the parameter.
func checkPlates(t *testing.T, d *demoServer, b *browser, engine string) {
	var first wire.PlateList
	platesAPI(t, d, "GET", "/v1/plates?limit=25", nil, http.StatusOK, &first)
	b.visit("/plates")
	b.shot(engine + "-plates")
	if got := b.count("#plate-list tbody tr"); got != len(first.Plates) {
		t.Errorf("/plates shows %d rows, the API's first page of 25 has %d", got, len(first.Plates))
	}
	// The demo has more plates than a page: the next page continues
	// where the API's next page does.
	if first.NextCursor == "" {
		t.Fatalf("the demo has no second page of plates; the pager is untested")
	}
	var second wire.PlateList
	platesAPI(t, d, "GET", "/v1/plates?limit=25&cursor="+url.QueryEscape(first.NextCursor), nil, http.StatusOK, &second)
	var want wire.PlateView
	if err := json.Unmarshal(second.Plates[0], &want); err != nil {
		t.Fatal(err)
	}
	next := eval[string](b, `document.querySelector('a[rel="next"]').getAttribute("href")`)
	b.visit(next)
	if got := b.text("#plate-list tbody tr td a"); got != want.Barcode {
		t.Errorf("the next page starts with %s, the API's with %s", got, want.Barcode)
	}
	if b.count(`.pager a[href="/plates"]`) != 1 {
		t.Errorf("a later page has no link back to the first")
	}

	// The search by barcode finds exactly the failing demo plate.
	v, qc := demoPlateByBarcode(t, d, "LK-384-03")
	b.visit("/plates")
	// The form's own page is marked, so that the wait is for the answer.
	eval[string](b, `document.body.dataset.before = "search"`)
	b.do("search", chromedp.SendKeys(chromedp.ID("barcode"), "LK-384-03"), chromedp.Submit(chromedp.ID("barcode")),
		chromedp.WaitReady(chromedp.CSS(`body:not([data-before])`)))
	b.settle()
	b.clean("search")
	if got := eval[string](b, "location.search"); !strings.Contains(got, "barcode=LK-384-03") {
		t.Errorf("the search went to %q", got)
	}
	if n := b.count("#plate-list tbody tr"); n != 1 {
		t.Fatalf("the search for LK-384-03 shows %d plates, want 1", n)
	}
	row := b.text("#plate-list tbody tr")
	if !strings.Contains(row, "LK-384-03") || b.count("#plate-list .badge.fail") != 1 || !strings.Contains(row, qc.Reasons[0]) {
		t.Errorf("the found row %q lacks the barcode, the fail badge or the API's reason %q", row, qc.Reasons[0])
	}
	if got := b.count(`#plate-list a[href="/plates/` + v.PlateID + `"]`); got != 1 {
		t.Errorf("the row does not link to /plates/%s", v.PlateID)
	}

	// Bad query parameters: a 400 page that names the parameter.
	for _, c := range []struct{ query, name string }{{"from=12/10/2026", "from"}, {"from=2026-10-20&to=2026-10-01", "to"}, {"assay=no-such-assay", "assay"}} {
		b.visitExpect("/plates?"+c.query, http.StatusBadRequest)
		if msg := b.text(".problem"); !strings.HasPrefix(msg, c.name+":") {
			t.Errorf("/plates?%s: the error %q does not name %s", c.query, msg, c.name)
		}
	}
	// A date range of days, both included: from the day LK-384-02 was
	// measured to the day of LK-384-03 (a week later; the demo's
	// screening plates are a week apart) holds those two.
	p2, _ := demoPlateByBarcode(t, d, "LK-384-02")
	b.visit("/plates?assay=lgx7-vm-dye&from=" + p2.MeasuredAt[:10] + "&to=" + v.MeasuredAt[:10])
	got := eval[[]string](b, `Array.from(document.querySelectorAll("#plate-list tbody tr td:first-child")).map(td => td.textContent.trim())`)
	var inRange []string
	for _, bc := range got {
		if strings.HasPrefix(bc, "LK-384-") {
			inRange = append(inRange, bc)
		}
	}
	if strings.Join(inRange, ",") != "LK-384-03,LK-384-02" {
		t.Errorf("%s to %s lists screening plates %v, want LK-384-03 then LK-384-02", p2.MeasuredAt[:10], v.MeasuredAt[:10], inRange)
	}
}

// checkPlate: the failing demo plate's page shows a heat map cell for
// each of its 384 wells with the legend of roles, the QC table with the
// API's reason, a thumbnail per curve that loads, and downloads the
// wells (384 rows and a header, values as the API's) and the curves.
func checkPlate(t *testing.T, d *demoServer, b *browser, engine string) {
	v, qc := demoPlateByBarcode(t, d, "LK-384-03")
	var full wire.PlateView
	platesAPI(t, d, "GET", "/v1/plates/"+v.PlateID, nil, http.StatusOK, &full)
	b.visit("/plates/" + v.PlateID)
	if got := b.text("h1"); got != "Plate LK-384-03" {
		t.Errorf("heading %q", got)
	}
	if n := b.count("#heatmap svg .well"); n != 384 {
		t.Errorf("the heat map has %d well cells, want 384", n)
	}
	for role, want := range map[string]int{"max_control": 32, "min_control": 32, "sample": 320} {
		if n := b.count("#heatmap svg .well." + role); n != want {
			t.Errorf("the heat map has %d %s cells, want %d (the demo's layout)", n, role, want)
		}
	}
	keys := eval[[]string](b, `Array.from(document.querySelectorAll("#heatmap svg .legend-key text")).map(e => e.textContent)`)
	if len(keys) != 5 || !strings.Contains(strings.Join(keys, "|"), "excluded") || !strings.Contains(strings.Join(keys, "|"), "empty") {
		t.Errorf("the heat map's legend is %q", keys)
	}
	if b.count("#heatmap svg .colourbar") < 10 {
		t.Errorf("the heat map has no colour scale")
	}
	// The QC table: the API's reason and Z′ (to the three figures shown).
	table := b.text("#qc-table")
	if len(qc.Reasons) == 0 || !strings.Contains(table, qc.Reasons[0]) || !strings.Contains(b.text("#qc-verdict"), "fail") {
		t.Errorf("the QC table lacks the failing reason %q:\n%s", qc.Reasons, table)
	}
	// Z′ is shown to three significant figures (sig): within half a unit
	// of its last digit of the API's.
	zs := eval[string](b, `document.querySelector("#qc-table tbody tr td.num").textContent`)
	z, err := strconv.ParseFloat(strings.Replace(zs, "−", "-", 1), 64)
	api := float64(qc.ZPrime)
	if half := 0.5 * math.Pow(10, math.Floor(math.Log10(math.Abs(api)))-2); err != nil || math.Abs(z-api) > half*(1+1e-9) {
		t.Errorf("Z′ shown %q, the API's %v", zs, api)
	}
	// Thumbnails: one per curve of the API's plate, each loaded.
	if n := b.count("#curve-grid img"); n != len(full.Curves) || n == 0 {
		t.Errorf("%d thumbnails, the API's plate has %d curves", n, len(full.Curves))
	}
	b.do("thumbnails load", chromedp.ScrollIntoView(chromedp.CSS("#curve-grid li:last-child")),
		chromedp.Poll[chromedp.Void](`Array.from(document.querySelectorAll("#curve-grid img")).every(i => i.complete)`))
	if bad := eval[int](b, `Array.from(document.querySelectorAll("#curve-grid img")).filter(i => !(i.naturalWidth > 0)).length`); bad != 0 {
		t.Errorf("%d thumbnails did not load", bad)
	}
	b.shot(engine + "-plate")
	b.clean("thumbnails")
	// At tablet width the heat map shrinks to fit: nothing scrolls sideways.
	b.do("tablet width", chromedp.EmulateViewport(768, 1024))
	if w := eval[int](b, "document.documentElement.scrollWidth"); w > 768 {
		t.Errorf("at 768 px the plate page is %d px wide", w)
	}
	b.shot(engine + "-plate-768")
	b.do("desktop width", chromedp.EmulateViewport(1280, 800))
	// The first card's pEC50 is the API's, to two decimals.
	var c0 wire.PlateCurve
	if err := json.Unmarshal(full.Curves[0], &c0); err != nil {
		t.Fatal(err)
	}
	if got := b.text("#curve-grid li:first-child .pec50"); c0.Activity == "active" && !strings.HasSuffix(got, strconv.FormatFloat(float64(c0.PEC50), 'f', 2, 64)) {
		t.Errorf("the first thumbnail's pEC50 %q, the API's %.2f", got, float64(c0.PEC50))
	}
	if b.count(`#curve-grid a[href="/curves/`+c0.ID+`"]`) == 0 {
		t.Errorf("the first thumbnail does not link to /curves/%s", c0.ID)
	}

	// The wells download: a header and 384 rows; A01's raw value is the API's.
	body := evalAwait[string](b, `fetch("/plates/`+v.PlateID+`/wells.csv").then(r => r.ok ? r.text() : "status " + r.status)`)
	rows, err := csv.NewReader(strings.NewReader(body)).ReadAll()
	if err != nil {
		t.Fatalf("wells.csv: %v\n%.300s", err, body)
	}
	if len(rows) != 385 || rows[0][0] != "plate_id" || rows[0][1] != "well" {
		t.Fatalf("wells.csv has %d rows (want 385) and header %v", len(rows), rows[0])
	}
	var wells wire.WellList
	platesAPI(t, d, "GET", "/v1/plates/"+v.PlateID+"/wells", nil, http.StatusOK, &wells)
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	for i, w := range wells.Wells {
		r := rows[i+1]
		raw, err1 := strconv.ParseFloat(r[col["value"]], 64)
		norm, err2 := strconv.ParseFloat(r[col["normalised"]], 64)
		if r[col["well"]] != w.Well || r[col["role"]] != w.Role || err1 != nil || err2 != nil || w.Value == nil || w.Normalised == nil ||
			raw != float64(*w.Value) || math.Abs(norm-float64(*w.Normalised)) != 0 {
			t.Errorf("wells.csv row %d %v differs from the API's well %+v", i+1, r, w)
			break
		}
	}
	// The curves download is the API's file.
	mine := evalAwait[string](b, `fetch("/plates/`+v.PlateID+`/curves.csv").then(r => r.ok ? r.text() : "status " + r.status)`)
	req, _ := http.NewRequest("GET", d.Base+"/v1/plates/"+v.PlateID+"/curves.csv", nil)
	req.Header.Set("Authorization", "Bearer "+d.Admin)
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	theirs, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if mine != string(theirs) || strings.Count(mine, "\n") != len(full.Curves)+1 {
		t.Errorf("the page's curves.csv (%d lines) differs from the API's (%d lines)", strings.Count(mine, "\n"), strings.Count(string(theirs), "\n"))
	}
	// A curve of this plate asked for under another plate is not there.
	other, _ := demoPlateByBarcode(t, d, "LK-384-01")
	if st := evalAwait[int](b, `fetch("/plates/`+other.PlateID+`/curves/`+c0.ID+`/plot.svg").then(r => r.status)`); st != http.StatusNotFound {
		t.Errorf("a curve under another plate answered %d, want 404", st)
	}
	b.forget("/curves/" + c0.ID + "/plot.svg")
	b.clean("plate downloads")
	if !strings.Contains(strings.ToLower(b.text("footer.caution")), "research use only") {
		t.Errorf("the plate page lacks the research-use caution")
	}
}

// checkSchild: a Schild analysis posted to the API (the demo's
// testdata/demo/schild.csv) shows on its page with the API's pA2, slope
// and dose ratios and the verdict.
func checkSchild(t *testing.T, d *demoServer, b *browser, engine string) {
	raw, err := os.ReadFile("../../testdata/demo/schild.csv")
	if err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(bytes.NewReader(raw)).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	req := wire.SchildRequest{ConcUnit: "nM", AgonistID: "demo-ag-1", AntagonistID: "demo-ant-2"}
	byB := map[float64]int{}
	for _, r := range recs[1:] {
		var v [3]float64
		for i := range v {
			if v[i], err = strconv.ParseFloat(r[i], 64); err != nil {
				t.Fatal(err)
			}
		}
		k, ok := byB[v[0]]
		if !ok {
			k = len(req.Curves)
			byB[v[0]] = k
			req.Curves = append(req.Curves, wire.SchildCurve{AntagonistConc: &v[0]})
		}
		req.Curves[k].Points = append(req.Curves[k].Points, wire.PointIn{Conc: &v[1], Response: &v[2]})
	}
	var res wire.SchildResponse
	platesAPI(t, d, "POST", "/v1/schild", req, http.StatusCreated, &res)
	var got wire.SchildResponse
	platesAPI(t, d, "GET", "/v1/schild/"+res.ID, nil, http.StatusOK, &got)
	if got.Regression == nil || got.Global == nil || !got.Competitive {
		t.Fatalf("the demo's Schild data gave no regression or global fit, or is not competitive: %+v", got)
	}
	b.visit("/schild/" + res.ID)
	b.shot(engine + "-schild")
	if h := b.text("h1"); h != "Schild analysis: demo-ag-1 vs demo-ant-2" {
		t.Errorf("heading %q", h)
	}
	two := func(x wire.Num) string { return strconv.FormatFloat(float64(x), 'f', 2, 64) }
	if pa2 := b.text("#pa2-regression td.num"); pa2 != two(got.Regression.PA2.Estimate) {
		t.Errorf("pA2 shown %s, the API's %s", pa2, two(got.Regression.PA2.Estimate))
	}
	if ci := b.text("#pa2-regression td.num:nth-of-type(2)"); ci != two(got.Regression.PA2.CI[0])+" to "+two(got.Regression.PA2.CI[1]) {
		t.Errorf("pA2 interval shown %q, the API's %v", ci, got.Regression.PA2.CI)
	}
	if pa2 := b.text("#pa2-global td.num"); pa2 != two(got.Global.PA2.Estimate) {
		t.Errorf("global pA2 shown %s, the API's %s", pa2, two(got.Global.PA2.Estimate))
	}
	if got.Global.PKB != nil {
		if pkb := b.text("#pkb td.num"); pkb != two(got.Global.PKB.Estimate) {
			t.Errorf("pKB shown %s, the API's %s", pkb, two(got.Global.PKB.Estimate))
		}
	}
	if n := b.count("#dose-ratios tbody tr"); n != len(got.DoseRatios) {
		t.Errorf("%d dose ratios shown, the API has %d", n, len(got.DoseRatios))
	}
	if !strings.Contains(b.text("#verdict"), "competitive") || b.count("#schild-figure svg") != 1 {
		t.Errorf("the verdict or the Schild plot is missing")
	}
	for _, href := range []string{"/compounds/demo-ag-1", "/compounds/demo-ant-2"} {
		if b.count(`a[href="`+href+`"]`) != 1 {
			t.Errorf("the page does not link to %s", href)
		}
	}
	// An unknown analysis is the 404 page.
	page := evalAwait[string](b, `fetch("/schild/no-such-analysis").then(r => r.status + " " + r.headers.get("Content-Type"))`)
	if page != "404 text/html; charset=utf-8" {
		t.Errorf("an unknown analysis answered %s, want the 404 page", page)
	}
	b.forget("/schild/no-such-analysis")
	b.clean("unknown analysis")
}
