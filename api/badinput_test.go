package api

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"net/http/httptest"
	"net/url"
	"sort"
	"strings"
	"sync"
	"testing"

	"sluice/api/ingest"
	"sluice/db"
	"sluice/db/dbtest"
)

// badCase is one hostile request of the bad-input catalogue.
type badCase struct {
	name, method, path, scope, body string
	hdr                             []string // name, value pairs
}

// badText are JSON string literals the store must never see: control
// characters, invalid UTF-8 (raw bytes, which RFC 8259 §8.1 forbids in a
// JSON text) and text far over any length limit.
var badText = []struct{ name, lit string }{
	{"NUL", `"a\u0000b"`},
	{"SOH", `"a\u0001b"`},
	{"ESC", `"a\u001b[31mb"`},
	{"DEL", `"a\u007fb"`},
	{"newline", `"a\nb"`},
	{"C1", `"a\u0085b"`},
	{"invalid UTF-8", "\"a\xff\xfeb\""},
	{"64 KiB", `"` + strings.Repeat("x", 64<<10) + `"`},
}

// badQuery are query-parameter and path values, already escaped.
var badQuery = []struct{ name, esc string }{
	{"NUL", "a%00b"},
	{"ESC", "a%1Bb"},
	{"newline", "a%0Ab"},
	{"invalid UTF-8", "a%FF%FEb"},
	{"64 KiB", strings.Repeat("x", 64<<10)},
}

// mutate sets the member at path (dot-separated; a number indexes an
// array; a last element "+k" adds a member named by the bad literal) of the
// JSON object base to the raw JSON literal lit.
func mutate(t *testing.T, base, path, lit string) string {
	var doc any
	if err := json.Unmarshal([]byte(base), &doc); err != nil {
		t.Fatal(err)
	}
	const mark = "\x01mark\x01"
	parts := strings.Split(path, ".")
	cur := doc
	for i, p := range parts {
		last := i == len(parts)-1
		switch v := cur.(type) {
		case map[string]any:
			if last && p == "+k" {
				v[mark] = "x"
			} else if last {
				v[p] = mark
			} else {
				if v[p] == nil {
					v[p] = map[string]any{}
				}
				cur = v[p]
			}
		case []any:
			var n int
			fmt.Sscan(p, &n)
			if last {
				v[n] = mark
			} else {
				cur = v[n]
			}
		}
	}
	b, err := json.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	m, _ := json.Marshal(mark)
	return strings.Replace(string(b), string(m), lit, 1)
}

// badCatalogue is every hostile request: text in every free-text field and
// id of every POST body, numbers out of range in every numeric setting,
// headers, path and query parameters, CSV and reader grids.
func badCatalogue(t *testing.T) []badCase {
	var cs []badCase
	add := func(c badCase) {
		if c.method == "" {
			c.method = "POST"
		}
		cs = append(cs, c)
	}
	bodies := map[string]string{}
	scopes := map[string]string{}
	for _, rt := range walkRoutes(t, map[string]func(*testing.T, *testServer) string{}) {
		bodies[rt.path], scopes[rt.path] = rt.body(0), rt.scope
	}
	bodies["/v1/fits"] = mutate(t, bodies["/v1/fits"], "bootstrap", `{"resamples":50,"seed":1}`)
	// The potency routes act on stored curves: {curve} and {curve2} are
	// fits of BAD-C in assay BAD-A that TestBadInputCatalogue stores first.
	delete(bodies, "/v1/curves/{id}/review")
	delete(bodies, "/v1/curves/{id}/refit")
	const review, refit, msr = "/v1/curves/{curve}/review", "/v1/curves/{curve}/refit", "/v1/msr-studies"
	bodies[review], scopes[review] = `{"decision":"rejected","reason":"why"}`, ScopeSubmit
	bodies[refit], scopes[refit] = `{"exclude":[3],"reason":"why"}`, ScopeSubmit
	bodies[msr] = `{"assay_id":"BAD-A","pairs":[{"run1":"{curve}","run2":"{curve2}"}]}`
	texts := map[string][]string{
		"/v1/assays":      {"id", "name", "target", "readout", "units"},
		"/v1/compounds":   {"id", "name", "target", "readout", "units"},
		"/v1/fits":        {"model", "conc_unit", "assay_id", "compound_id", "refit_of", "labels.walk", "labels.+k", "bootstrap.scheme", "bootstrap.interval"},
		"/v1/layouts":     {"id", "name", "conc_unit", "wells.0.well", "wells.0.role", "wells.2.compound_id", "wells.2.antagonist_id"},
		"/v1/plates":      {"barcode", "assay_id", "measured_at", "conc_unit", "mode", "wells.0.well", "wells.0.role", "wells.2.compound_id", "wells.2.antagonist_id", "fit.model"},
		"/v1/schild":      {"conc_unit", "agonist_id", "antagonist_id"},
		"/v1/potential":   {"conc_unit", "curve_id", "agonist_id", "channel.name", "cell.preset", "cell.ions.+k", "cell.resting_conductance_ns.+k", "channel.permeability.+k"},
		"/v1/operational": {"conc_unit"},
		review:            {"decision", "reason", "+k"},
		refit:             {"reason", "exclude.0", "+k"},
		msr:               {"assay_id", "pairs.0.run1", "pairs.0.run2", "+k"},
	}
	for path, fields := range texts {
		for _, f := range fields {
			for _, v := range badText {
				add(badCase{name: fmt.Sprintf("text %s /%s %s", path, f, v.name), path: path, scope: scopes[path],
					body: mutate(t, bodies[path], f, v.lit)})
			}
		}
	}
	numbers := map[string][]string{
		"/v1/fits": {"confidence=1", "confidence=-0.5", "confidence=1.5", "confidence=1e308", "max_hill=-1", "max_hill=1e308",
			"bootstrap.resamples=-1", "bootstrap.resamples=1e9", "bootstrap.seed=-1", "fixed.hill=1e999", "points.0.conc=-1", "points.0.conc=null",
			"points.0.weight=-1"},
		"/v1/plates": {"format=0", "format=97", "format=-384", "format=1e9", "fit.confidence=1.5", "fit.confidence=-1", "fit.max_hill=-2",
			"fit.bootstrap.resamples=-5", "qc.z_prime_min=2", "qc.cv_max=-1", "wells.2.conc=-1", "wells.2.conc=null", "wells.0.value=1e999",
			"wells.2.antagonist_conc=-1"},
		"/v1/layouts": {"format=0", "format=100", "wells.2.conc=-1", "wells.2.antagonist_conc=-1"},
		"/v1/schild":  {"confidence=1", "confidence=7", "curves.0.antagonist_conc=-1", "curves.0.antagonist_conc=null", "bootstrap.resamples=-1"},
		"/v1/operational": {"confidence=1", "confidence=-1", "confidence=1.5", "confidence=1e308", "reference.0.conc=-1",
			"partial.0.response=null"},
		"/v1/potential": {"agonist_conc=[null]", "agonist_conc=[-1]", "agonist_conc=[1e999]", "channel.count=-1", "channel.conductance_ps=-5",
			"channel.mg_mm=-1", "cell.temperature_c=-300", "hill.po_max=2", "hill.po_max=-0.1", "hill.hill=null", "po_max=2", "cell.ions.k.out=-1"},
		review: {"decision=1", "decision=null", "reason=2", "reason=[]"},
		refit: {"exclude=[-1]", "exclude=[16]", "exclude=[1e999]", "exclude=[0.5]", "exclude=[[1]]", "exclude=null", "exclude=[]", "exclude={}",
			"exclude=[0,0]", "reason=1"},
		msr: {"pairs=[]", "pairs=null", "pairs.0={}", "pairs.0.run1=1", "run1=[1]", "assay_id=7"},
	}
	// A missing or unknown concentration unit on every body that sends
	// concentrations.
	for _, path := range []string{"/v1/fits", "/v1/plates", "/v1/layouts", "/v1/schild", "/v1/operational", "/v1/potential"} {
		for _, lit := range []string{`null`, `""`, `"furlong"`, `"MM"`, `1e-6`} {
			add(badCase{name: fmt.Sprintf("unit %s conc_unit=%s", path, lit), path: path, scope: scopes[path], body: mutate(t, bodies[path], "conc_unit", lit)})
		}
	}
	for path, sets := range numbers {
		for _, s := range sets {
			f, lit, _ := strings.Cut(s, "=")
			add(badCase{name: fmt.Sprintf("number %s /%s=%s", path, f, lit), path: path, scope: scopes[path], body: mutate(t, bodies[path], f, lit)})
		}
	}
	// Headers on every POST route.
	for path, body := range bodies {
		for _, h := range []struct{ name, k, v string }{
			{"non-ASCII key", "Idempotency-Key", "ключ-1"},
			{"control in key", "Idempotency-Key", "k\x01y"},
			{"long key", "Idempotency-Key", strings.Repeat("k", 4096)},
			{"malformed content type", "Content-Type", "application/json; charset"},
			{"unknown content type", "Content-Type", "text/plain"},
		} {
			add(badCase{name: fmt.Sprintf("header %s %s", path, h.name), path: path, scope: scopes[path], body: body, hdr: []string{h.k, h.v}})
		}
		add(badCase{name: "body " + path + " invalid UTF-8 outside strings", path: path, scope: scopes[path], body: "\xff" + body})
		add(badCase{name: "body " + path + " empty", path: path, scope: scopes[path], body: " "})
	}
	add(badCase{name: "header bearer invalid UTF-8", method: "GET", path: "/v1/assays", hdr: []string{"Authorization", "Bearer \xff\xfe"}})
	add(badCase{name: "header bearer long", method: "GET", path: "/v1/assays", hdr: []string{"Authorization", "Bearer " + strings.Repeat("t", 8192)}})
	add(badCase{name: "header bearer control", method: "GET", path: "/v1/assays", hdr: []string{"Authorization", "Bearer a\x01b"}})
	// Path parameters of every read route.
	for _, p := range []string{"/v1/fits/%s", "/v1/fits/%s/plot.svg", "/v1/assays/%s", "/v1/compounds/%s", "/v1/plates/%s", "/v1/plates/%s/curves.csv",
		"/v1/plates/%s/heatmap.svg", "/v1/jobs/%s", "/v1/layouts/%s", "/v1/schild/%s", "/v1/analyses/%s", "/v1/analyses/%s/result"} {
		for _, v := range badQuery {
			add(badCase{name: fmt.Sprintf("path %s %s", p, v.name), method: "GET", path: fmt.Sprintf(p, v.esc), scope: ScopeRead})
		}
	}
	// Query parameters.
	for _, q := range []string{"assay_id", "compound_id", "cursor"} {
		for _, v := range badQuery {
			add(badCase{name: fmt.Sprintf("query /v1/fits %s %s", q, v.name), method: "GET", path: "/v1/fits?" + q + "=" + v.esc, scope: ScopeRead})
		}
	}
	for _, q := range []string{"limit=-1", "limit=abc", "limit=99999999999999999999", "from=yesterday", "to=2026-13-45T00:00:00Z"} {
		add(badCase{name: "query /v1/fits " + q, method: "GET", path: "/v1/fits?" + q, scope: ScopeRead})
	}
	csvOK := "well,role,compound_id,conc,value\nA01,max_control,,,100\nA02,min_control,,,0\n"
	csvQuery := "format=96&barcode=CSV-1"
	for _, q := range []string{"barcode", "assay_id", "measured_at", "conc_unit", "mode", "model", "scheme", "interval"} {
		for _, v := range badQuery {
			add(badCase{name: fmt.Sprintf("query /v1/plates %s %s", q, v.name), path: "/v1/plates?conc_unit=M&format=96&" + q + "=" + v.esc, scope: ScopeSubmit,
				body: csvOK, hdr: []string{"Content-Type", "text/csv"}})
		}
	}
	for _, q := range []string{"format=abc", "format=97", "resamples=-1", "resamples=abc", "seed=-1", "wait=-1s", "wait=10h", "wait=abc", "format=96&format=384"} {
		add(badCase{name: "query /v1/plates " + q, path: "/v1/plates?barcode=Q&" + q, scope: ScopeSubmit, body: csvOK, hdr: []string{"Content-Type", "text/csv"}})
	}
	// Long CSV.
	for _, c := range []struct{ name, body string }{
		{"unterminated quote", "well,role,compound_id,conc,value\n\"A01,max_control,,,100\n"},
		{"bare quote", "well,role,compound_id,conc,value\nA\"01,max_control,,,100\n"},
		{"quote then text", "well,role,compound_id,conc,value\n\"A01\"x,max_control,,,100\n"},
		{"ragged row", "well,role,compound_id,conc,value\nA01,max_control,,100\n"},
		{"NUL in cell", "well,role,compound_id,conc,value\nA01,sample,c\x00d,1,100\n"},
		{"control in cell", "well,role,compound_id,conc,value\nA01,sample,c\x1bd,1,100\n"},
		{"invalid UTF-8 in cell", "well,role,compound_id,conc,value\nA01,sample,c\xffd,1,100\n"},
		{"long cell", "well,role,compound_id,conc,value\nA01,sample," + strings.Repeat("c", 64<<10) + ",1,100\n"},
		{"header only", "well,role,compound_id,conc,value\n"},
		{"empty", ""},
		{"missing column", "well,role\nA01,sample\n"},
		{"unknown role", "well,role,compound_id,conc,value\nA01,blank,,,100\n"},
		{"well off the plate", "well,role,compound_id,conc,value\nZ99,max_control,,,100\n"},
		{"NaN value", "well,role,compound_id,conc,value\nA01,max_control,,,NaN\n"},
		{"negative conc", "well,role,compound_id,conc,value\nA01,sample,c,-1,100\n"},
	} {
		add(badCase{name: "csv " + c.name, path: "/v1/plates?" + csvQuery, scope: ScopeSubmit, body: c.body, hdr: []string{"Content-Type", "text/csv"}})
	}
	// Reader grids against the stored 96-well layout "bad-96".
	header := ",1,2,3,4,5,6,7,8,9,10,11,12\n"
	row := func(r byte, cell string) string {
		return string(r) + strings.Repeat(","+cell, 12) + "\n"
	}
	full := func(cell string) string {
		var b strings.Builder
		b.WriteString(header)
		for r := byte('A'); r <= 'H'; r++ {
			b.WriteString(row(r, cell))
		}
		return b.String()
	}
	for _, c := range []struct{ name, body string }{
		{"quote error", strings.Replace(full("1"), "A,1", "A,\"1", 1)},
		{"too few rows", header + row('A', "1")},
		{"extra column", strings.Replace(full("1"), "\nB,", "\nB,1,", 1)},
		{"not a number", full("x")},
		{"NUL", full("1\x00")},
		{"invalid UTF-8", full("\xff")},
		{"control", full("1\x1b")},
		{"empty", ""},
		{"row label off the plate", strings.Replace(full("1"), "\nH,", "\nZ,", 1)},
	} {
		add(badCase{name: "grid " + c.name, path: "/v1/plates?layout_id=bad-96&" + csvQuery, scope: ScopeSubmit, body: c.body,
			hdr: []string{"Content-Type", "text/csv"}})
	}
	for _, v := range badQuery {
		add(badCase{name: "grid layout_id " + v.name, path: "/v1/plates?conc_unit=M&format=96&barcode=G&layout_id=" + v.esc, scope: ScopeSubmit, body: full("1"),
			hdr: []string{"Content-Type", "text/csv"}})
	}
	// PUT a drift baseline (admin): bad numbers, text, unknown members,
	// broken JSON, an unknown metric.
	const baseline = "/v1/assays/BAD-A/baselines/z_prime"
	for _, b := range []string{`{"mean":1e999,"sd":0.05}`, `{"mean":0.7,"sd":-1}`, `{"mean":0.7,"sd":0}`, `{"mean":0.7}`, `{"mean":"x","sd":0.05}`,
		`{"mean":0.7,"sd":0.05,"colour":"red"}`, `{"plates":[1]}`, `{"plates":[]}`, `{"plates":["no-such-plate"]}`, `{"auto":true,"runs":-1}`,
		`{"auto":true,"mean":0.7,"sd":0.05}`, `{"mean":0.7,`, `[]`, ` `, "\xff{}"} {
		add(badCase{name: "body PUT " + baseline + " " + b, method: "PUT", path: baseline, scope: ScopeAdmin, body: b})
	}
	for _, v := range badText {
		add(badCase{name: "text PUT " + baseline + " plates " + v.name, method: "PUT", path: baseline, scope: ScopeAdmin,
			body: `{"plates":[` + v.lit + `]}`})
	}
	for _, v := range badQuery {
		add(badCase{name: "path PUT baselines metric " + v.name, method: "PUT", path: "/v1/assays/BAD-A/baselines/" + v.esc, scope: ScopeAdmin,
			body: `{"mean":0.7,"sd":0.05}`})
	}
	add(badCase{name: "path PUT baselines unknown metric", method: "PUT", path: "/v1/assays/BAD-A/baselines/zz", scope: ScopeAdmin,
		body: `{"mean":0.7,"sd":0.05}`})
	// Path parameters of the potency and drift reads.
	for _, p := range []string{"/v1/compounds/%s/potency", "/v1/compounds/%s/potency.svg", "/v1/assays/%s/potency", "/v1/plates/%s/wells",
		"/v1/assays/%s/drift", "/v1/assays/%s/drift.svg", "/v1/curves/%s", "/v1/curves/%s/plot.svg", "/v1/msr-studies/%s"} {
		for _, v := range badQuery {
			add(badCase{name: fmt.Sprintf("path %s %s", p, v.name), method: "GET", path: fmt.Sprintf(p, v.esc), scope: ScopeRead})
		}
	}
	// Their query parameters: bad text, bad numbers and times, unknown
	// and repeated parameters, bad cursors.
	queries := map[string][]string{
		"/v1/compounds/BAD-C/potency": {"include=maybe", "from=yesterday", "to=2026-13-45T00:00:00Z", "msr_window=2", "msr_window=abc",
			"msr_window=1e9", "assay_id=NO-SUCH-ASSAY", "colour=red", "include=all&include=usable"},
		"/v1/compounds/BAD-C/potency.svg": {"from=yesterday", "msr_window=2", "msr_window=abc", "include=all", "assay_id=NO-SUCH-ASSAY", "colour=red"},
		"/v1/assays/BAD-A/potency": {"sort=potency", "sort=-", "sort=--n", "sort=msr&msr_window=4", "limit=0", "limit=abc", "limit=1001",
			"limit=-1", "cursor=garbage", "cursor=bm90LWEtY3Vyc29y", "cursor=eyJzIjoibiIsInYiOm51bGwsImMiOiIifQ", "msr_window=2",
			"format=xml", "colour=red", "sort=n&sort=-n"},
		"/v1/plates":                 {"limit=-1", "limit=abc", "limit=1001", "from=yesterday", "to=2026-13-45T00:00:00Z", "cursor=garbage", "colour=red"},
		"/v1/assays/BAD-A/drift":     {"metric=zz", "from=yesterday", "to=2026-13-45T00:00:00Z", "colour=red"},
		"/v1/assays/BAD-A/drift.svg": {"metric=zz", "from=yesterday", "colour=red"},
		"/v1/drift":                  {"colour=red", "assay_id=BAD-A"},
	}
	text := map[string][]string{
		"/v1/compounds/BAD-C/potency":     {"assay_id", "from", "include"},
		"/v1/compounds/BAD-C/potency.svg": {"assay_id"},
		"/v1/assays/BAD-A/potency":        {"sort", "cursor", "format"},
		"/v1/plates":                      {"assay_id", "barcode", "cursor"},
		"/v1/assays/BAD-A/drift":          {"metric"},
		"/v1/assays/BAD-A/drift.svg":      {"metric"},
	}
	for path, qs := range queries {
		for _, q := range qs {
			add(badCase{name: "query " + path + " " + q, method: "GET", path: path + "?" + q, scope: ScopeRead})
		}
		for _, q := range text[path] {
			for _, v := range badQuery {
				add(badCase{name: fmt.Sprintf("query %s %s %s", path, q, v.name), method: "GET", path: path + "?" + q + "=" + v.esc, scope: ScopeRead})
			}
		}
	}
	sort.Slice(cs, func(i, j int) bool { return cs[i].name < cs[j].name })
	return cs
}

// badLayout96 is a valid 96-well layout: max controls in column 1, min
// controls in column 12, one compound across each row in between.
func badLayout96() string {
	var ws []string
	for r := 0; r < 8; r++ {
		for c := 1; c <= 12; c++ {
			name := fmt.Sprintf("%c%02d", 'A'+r, c)
			switch c {
			case 1:
				ws = append(ws, fmt.Sprintf(`{"well":%q,"role":"max_control"}`, name))
			case 12:
				ws = append(ws, fmt.Sprintf(`{"well":%q,"role":"min_control"}`, name))
			default:
				ws = append(ws, fmt.Sprintf(`{"well":%q,"role":"sample","compound_id":"G-%d","conc":%g}`, name, r, 1e-9*float64(int(1)<<(c-2))))
			}
		}
	}
	return `{"id":"bad-96","name":"grid","format":96,"conc_unit":"M","wells":[` + strings.Join(ws, ",") + `]}`
}

// TestBadInputCatalogue sends the same hostile requests to both engines:
// each is a 4xx problem+json, never a 5xx; the status is the same on both
// engines; and nothing is stored (no audit entry, no fit, no idempotency
// record for the request's key).
func TestBadInputCatalogue(t *testing.T) {
	cases := badCatalogue(t)
	if len(cases) < 200 {
		t.Fatalf("%d cases, want at least 200", len(cases))
	}
	var mu sync.Mutex
	status := map[string]map[string]int{} // engine → case → status
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		if w := ts.do("POST", "/v1/layouts", ScopeSubmit, badLayout96()); w.Code != 201 {
			t.Fatalf("layout: %d %s", w.Code, w.Body)
		}
		catalogue(t, ts, "BAD-A", "BAD-C")
		curve := storeFit(t, ts, `,"assay_id":"BAD-A","compound_id":"BAD-C"`)
		curve2 := storeFit(t, ts, `,"assay_id":"BAD-A","compound_id":"BAD-C","labels":{"run":"2"}`)
		subst := strings.NewReplacer("{curve}", curve, "{curve2}", curve2)
		ctx := context.Background()
		count := func() string {
			es, err := store.Audit(ctx, 1<<20)
			if err != nil {
				t.Fatal(err)
			}
			curves, err := store.CompoundPotency(ctx, db.PotencyFilter{CompoundID: "BAD-C"})
			if err != nil {
				t.Fatal(err)
			}
			reviews, err := store.Reviews(ctx, []string{curve, curve2})
			if err != nil {
				t.Fatal(err)
			}
			return fmt.Sprintf("%d audit entries, %d fits, %d curves and %d reviews of BAD-C", len(es), ts.runs(), len(curves), len(reviews))
		}
		before := count()
		got := map[string]int{}
		counts := map[string]int{}
		for i, c := range cases {
			key := fmt.Sprintf("bad-%d", i)
			var hdr []string
			if c.method == "POST" || c.method == "PUT" {
				hdr = []string{"Idempotency-Key", key}
			}
			hdr = append(hdr, c.hdr...)
			w := ts.doRaw(c.method, subst.Replace(c.path), c.scope, subst.Replace(c.body), hdr...)
			got[c.name] = w.Code
			switch {
			case w.Code >= 500:
				counts["5xx"]++
				t.Errorf("%s: %d %.300s", c.name, w.Code, w.Body)
			case w.Code < 400:
				counts["2xx/3xx"]++
				t.Errorf("%s: %d %.300s", c.name, w.Code, w.Body)
			case w.Header().Get("Content-Type") != "application/problem+json":
				counts["4xx"]++
				t.Errorf("%s: %d without a problem body: %.300s", c.name, w.Code, w.Body)
			default:
				counts["4xx"]++
				var p Problem
				if err := json.Unmarshal(w.Body.Bytes(), &p); err != nil || p.Status != w.Code {
					t.Errorf("%s: problem %v %.300s", c.name, err, w.Body)
				}
			}
			if after := count(); after != before {
				t.Errorf("%s: %d, and the store went from %s to %s", c.name, w.Code, before, after)
				before = after
			}
			if c.method == "POST" || c.method == "PUT" {
				for _, scope := range []string{ScopeRead, ScopeSubmit, ScopeAdmin} {
					if _, err := store.Idempotent(ctx, "test-"+scope, key); !errors.Is(err, db.ErrNotFound) {
						t.Errorf("%s: idempotency record for %s: %v", c.name, key, err)
					}
				}
			}
		}
		t.Logf("%s: %d cases: %v", store.Engine(), len(cases), counts)
		mu.Lock()
		status[store.Engine()] = got
		mu.Unlock()
	})
	a, b := status["sqlite"], status["postgres"]
	if a == nil || b == nil {
		return
	}
	for _, c := range cases {
		if a[c.name] != b[c.name] {
			t.Errorf("%s: %d on SQLite, %d on PostgreSQL", c.name, a[c.name], b[c.name])
		}
	}
}

// doRaw sends a request whose path is already escaped and whose headers
// may hold any bytes; a GET has no body.
func (ts *testServer) doRaw(method, path, scope, body string, hdr ...string) *httptest.ResponseRecorder {
	ts.t.Helper()
	req := httptest.NewRequest(method, "/", strings.NewReader(body))
	u, err := url.ParseRequestURI(path)
	if err != nil {
		ts.t.Fatalf("%s: %v", path, err)
	}
	req.URL = u
	req.RequestURI = path
	if method == "POST" || method == "PUT" {
		req.Header.Set("Content-Type", "application/json")
	}
	if scope != "" {
		req.Header.Set("Authorization", "Bearer "+ts.tokens[scope])
	}
	for i := 0; i+1 < len(hdr); i += 2 {
		req.Header.Set(hdr[i], hdr[i+1])
	}
	w := httptest.NewRecorder()
	ts.srv.Handler().ServeHTTP(w, req)
	return w
}

// Every error the readers return for any input (ingest.IsInputError, the
// fuzz targets' oracle) is a 4xx here, CSV quoting among them.
func TestIngestErrorsAre4xx(t *testing.T) {
	for _, e := range []error{ingest.ErrMissingColumn, ingest.ErrNotNumber, ingest.ErrBadValue, ingest.ErrNoData, ingest.ErrSyntax, ingest.ErrNoUnit} {
		if !ingest.IsInputError(e) {
			t.Errorf("%v is not an input error", e)
		}
		if s := statusOf(&ingest.ParseError{Line: 2, Err: fmt.Errorf("%w: x", e)}); s < 400 || s >= 500 {
			t.Errorf("%v: %d", e, s)
		}
	}
	_, _, err := ingest.ReadPlateCSV(strings.NewReader("well,role,conc,value\n\"A1,sample,1,1\n"), ingest.Molar, "conc_unit")
	if s := statusOf(err); s != 400 {
		t.Errorf("quote error %v: %d, want 400", err, s)
	}
}
