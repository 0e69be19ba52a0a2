package main

import (
	"context"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"net/url"
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/prometheus/client_golang/prometheus"

	"sluice/api"
	"sluice/db"
	"sluice/db/dbtest"
)

// benchPagePaths are the dashboard pages BenchmarkPages times; a page not
// served yet (404) is skipped, saying so, so pages other parts land are
// timed once they exist.
var benchPagePaths = []string{"/", "/plates", "/drift", "/assays/lgx7-vm-dye/drift", "/potential",
	"/potential?preset=neuron&channel=LGX-7&count=200&conductance_ps=50&p_na=1&p_k=1&log_ec50=-5&hill=1.5&po_max=0.8" +
		"&agonist_conc=0%2C0.1%2C1%2C3%2C10%2C30%2C100%2C1000&conc_unit=%C2%B5M&threshold_mv=-55",
	"/compounds", "/compounds/demo-ref"}

// seed1mVar names the large PostgreSQL database (1 000 000 curves) to time
// the overview and a compound's page on; unset, that part is skipped. The
// dashboard needs its session table there: opening the store migrates it.
const seed1mVar = "SLUICE_BENCH_SEED1M_URL"

// BenchmarkPages is the server time of each dashboard page on the demo
// (the handler in process, a signed-in session cookie, no network): the
// target is ≤ 100 ms a page. Run it with -count 5 and quote medians:
//
//	go test -run '^$' -bench BenchmarkPages -count 5 ./cmd/sluice/
//
// With SLUICE_TEST_DATABASE_URL the demo is timed on PostgreSQL too; with
// SLUICE_BENCH_SEED1M_URL the overview and a seeded compound are timed on
// that database (target ≤ 300 ms).
func BenchmarkPages(b *testing.B) {
	ctx := context.Background()
	b.Run("sqlite", func(b *testing.B) {
		store := benchDemoStore(b, "", b.TempDir())
		benchPages(b, store, append(benchPagePaths, demoPlatePaths(b, store)...))
	})
	b.Run("postgres", func(b *testing.B) {
		store := benchDemoStore(b, dbtest.PostgresURL(b), "")
		benchPages(b, store, append(benchPagePaths, demoPlatePaths(b, store)...))
	})
	b.Run("seed1m", func(b *testing.B) {
		u := os.Getenv(seed1mVar)
		if u == "" {
			b.Skipf("%s is not set", seed1mVar)
		}
		store, err := db.OpenWith(ctx, u, "", db.Options{})
		if err != nil {
			b.Fatal(err)
		}
		b.Cleanup(store.Close)
		cs, err := store.Compounds(ctx)
		if err != nil || len(cs) == 0 {
			b.Fatalf("seed1m compounds: %d, %v", len(cs), err)
		}
		benchPages(b, store, []string{"/", "/compounds/" + url.PathEscape(cs[len(cs)/2].ID)})
	})
}

// demoPlatePaths are the pages of the demo's 384-well plate LK-384-03 and
// of its first curve, whose IDs the demo generates.
func demoPlatePaths(b *testing.B, store db.Store) []string {
	b.Helper()
	ctx := context.Background()
	ps, _, err := store.PlateList(ctx, db.PlateFilter{Barcode: "LK-384-03", Limit: 1})
	if err != nil || len(ps) != 1 {
		b.Fatalf("the demo plate LK-384-03: %d plates, %v", len(ps), err)
	}
	cs, err := store.PlateCurves(ctx, ps[0].ID)
	if err != nil || len(cs) == 0 {
		b.Fatalf("curves of LK-384-03: %d, %v", len(cs), err)
	}
	return []string{"/plates/" + url.PathEscape(ps[0].ID), "/curves/" + url.PathEscape(cs[0].ID)}
}

// benchDemoStore opens a store (dbURL, else SQLite in dir) with the demo
// scenario loaded.
func benchDemoStore(b *testing.B, dbURL, dir string) db.Store {
	b.Helper()
	store, err := db.OpenWith(context.Background(), dbURL, dir, db.Options{})
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(store.Close)
	if _, err := loadDemo(context.Background(), store); err != nil {
		b.Fatal(err)
	}
	return store
}

// benchPages times each path as its own sub-benchmark with one signed-in
// session; the server runs with auth disabled (the anonymous admin), so
// the benchmark adds no token to the store and ends its session after.
func benchPages(b *testing.B, store db.Store, paths []string) {
	srv, err := api.New(api.Config{AuthDisabled: true}, api.Deps{Store: store, Registry: prometheus.NewRegistry(),
		Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	if err != nil {
		b.Fatal(err)
	}
	h := srv.Handler()
	session, csrf := benchSignIn(b, h)
	b.Cleanup(func() {
		req := httptest.NewRequest("POST", "/signout", strings.NewReader("csrf="+url.QueryEscape(csrf)))
		req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
		req.AddCookie(session)
		h.ServeHTTP(httptest.NewRecorder(), req)
	})
	for _, p := range paths {
		b.Run(strings.TrimPrefix(benchName(p), "/"), func(b *testing.B) {
			get := func() *httptest.ResponseRecorder {
				req := httptest.NewRequest("GET", p, nil)
				req.AddCookie(session)
				w := httptest.NewRecorder()
				h.ServeHTTP(w, req)
				return w
			}
			switch w := get(); w.Code {
			case http.StatusOK:
			case http.StatusNotFound:
				b.Skipf("%s is not served yet (404)", p)
			default:
				b.Fatalf("%s: %d %.300s", p, w.Code, w.Body.String())
			}
			b.ResetTimer()
			for b.Loop() {
				if w := get(); w.Code != http.StatusOK {
					b.Fatalf("%s: %d", p, w.Code)
				}
			}
		})
	}
}

// benchName names a path's sub-benchmark: the path, and "form" for the
// calculator with its query.
func benchName(p string) string {
	// Generated IDs would make every run's names differ.
	for _, pre := range []string{"/plates/", "/curves/"} {
		if strings.HasPrefix(p, pre) {
			return pre + "demo"
		}
	}
	if i := strings.IndexByte(p, '?'); i >= 0 {
		return p[:i] + "-form"
	}
	if p == "/" {
		return "overview"
	}
	return p
}

var (
	formField = regexp.MustCompile(`name="form" value="([^"]+)"`)
	csrfField = regexp.MustCompile(`name="csrf" value="([^"]+)"`)
)

// benchSignIn signs in through the form and returns the session cookie
// and the session's CSRF token.
func benchSignIn(b *testing.B, h http.Handler) (*http.Cookie, string) {
	b.Helper()
	w := httptest.NewRecorder()
	h.ServeHTTP(w, httptest.NewRequest("GET", "/signin", nil))
	m := formField.FindStringSubmatch(w.Body.String())
	if m == nil {
		b.Fatalf("the sign-in form has no form value: %.300s", w.Body.String())
	}
	req := httptest.NewRequest("POST", "/signin", strings.NewReader(url.Values{"form": {m[1]}, "token": {""}}.Encode()))
	req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	for _, c := range w.Result().Cookies() {
		req.AddCookie(c)
	}
	w = httptest.NewRecorder()
	h.ServeHTTP(w, req)
	var session *http.Cookie
	for _, c := range w.Result().Cookies() {
		if c.Name == "sluice_session" {
			session = c
		}
	}
	if session == nil {
		b.Fatalf("sign-in: %d, no session cookie", w.Code)
	}
	req = httptest.NewRequest("GET", "/potential", nil)
	req.AddCookie(session)
	w = httptest.NewRecorder()
	h.ServeHTTP(w, req)
	c := csrfField.FindStringSubmatch(w.Body.String())
	if c == nil {
		b.Fatalf("no CSRF token on a page (%d)", w.Code)
	}
	return session, c[1]
}
