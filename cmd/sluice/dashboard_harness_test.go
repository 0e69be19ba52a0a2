package main

import (
	"context"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	cdplog "github.com/chromedp/cdproto/log"
	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"

	"sluice/api"
	"sluice/db"
	"sluice/db/dbtest"
)

// The dashboard's tests drive a real browser (Debian's chromium through
// chromedp) against `sluice serve --demo` run in process on a loopback
// port. Without chromium they skip, saying so; under CI (CI=true) a
// missing chromium fails, and .ci/run installs it.

// chromiumPath finds the browser, or skips (fails under CI).
func chromiumPath(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("chromium is not installed; CI needs it for the dashboard tests (.ci/run installs Debian's chromium)")
	}
	t.Skip("chromium is not installed: the dashboard's browser tests are skipped (apt-get install chromium to run them)")
	return ""
}

// demoServer is a running `sluice serve --demo` and tokens of each scope.
type demoServer struct {
	Base                string
	Admin, Submit, Read string
	// Store is a second handle on the server's store, for checks.
	Store db.Store
}

// startDemo runs serve with the demo scenario on the engine's store
// ("sqlite" or "postgres") until the test ends.
func startDemo(t *testing.T, engine string) *demoServer {
	t.Helper()
	args := []string{"--demo", "--addr", "127.0.0.1:0", "--log-level", "warn"}
	var dbURL, dir string
	switch engine {
	case "sqlite":
		dir = t.TempDir()
		args = append(args, "--data", dir)
	case "postgres":
		dbURL = dbtest.PostgresURL(t)
	}
	env := map[string]string{"SLUICE_ADMIN_TOKEN": "dashboard-admin-token-0001", "SLUICE_DATABASE_URL": dbURL}
	cfg, err := loadServeConfig(args, func(k string) string { return env[k] }, flag.NewFlagSet("serve", flag.ContinueOnError))
	if err != nil {
		t.Fatal(err)
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan int, 1)
	go func() { done <- serve(ctx, cfg, ln, slog.New(slog.NewTextHandler(io.Discard, nil))) }()
	t.Cleanup(func() {
		cancel()
		<-done
	})
	d := &demoServer{Base: "http://" + ln.Addr().String(), Admin: env["SLUICE_ADMIN_TOKEN"]}
	// serve loads the demo before it listens: readyz answers once it has.
	deadline := time.Now().Add(2 * time.Minute)
	for {
		resp, err := http.Get(d.Base + "/readyz")
		if err == nil {
			resp.Body.Close()
			if resp.StatusCode == http.StatusOK {
				break
			}
		}
		if time.Now().After(deadline) {
			t.Fatalf("the demo server did not become ready: %v", err)
		}
		time.Sleep(100 * time.Millisecond)
	}
	store, err := db.OpenWith(context.Background(), dbURL, dir, db.Options{SkipMigrations: true})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(store.Close)
	d.Store = store
	for _, scope := range []string{api.ScopeRead, api.ScopeSubmit} {
		secret, hash := api.NewToken()
		err := store.Write(context.Background(), func(w db.Writer) error {
			return w.InsertToken(context.Background(), &db.Token{ID: "dash-" + scope, Name: "dash-" + scope, Scope: scope, Hash: hash,
				CreatedAt: time.Now()})
		})
		if err != nil {
			t.Fatal(err)
		}
		if scope == api.ScopeRead {
			d.Read = secret
		} else {
			d.Submit = secret
		}
	}
	return d
}

// browser is one headless chromium tab that records what would trouble a
// person: console errors, uncaught exceptions, and failed or refused
// sub-requests (a status ≥ 400 other than the page's own expected one).
type browser struct {
	t    *testing.T
	ctx  context.Context
	base string
	// shots is where screenshots go (outside the repository).
	shots string

	mu       sync.Mutex
	problems []string
	// expect is the status the next document may answer (0: < 400).
	expect int64
}

// newBrowser starts chromium as the machine's probe does: headless,
// without sandbox (root in CI), GPU or background networking.
func newBrowser(t *testing.T, base string) *browser {
	t.Helper()
	path := chromiumPath(t)
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(path), chromedp.NoSandbox, chromedp.DisableGPU, chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(1280, 800), chromedp.Flag("disable-quic", true), chromedp.Flag("disable-component-update", true))
	actx, cancelA := chromedp.NewExecAllocator(context.Background(), opts...)
	b := &browser{t: t, base: base, shots: screenshotDir(t)}
	ctx, cancelC := chromedp.NewContext(actx, chromedp.WithListener(b.listen))
	t.Cleanup(func() { cancelC(); cancelA() })
	b.ctx = ctx
	if err := chromedp.Do(ctx, chromedp.Navigate("about:blank")); err != nil {
		t.Fatalf("start chromium: %v", err)
	}
	return b
}

// screenshotDir is SLUICE_SCREENSHOTS, else sluice-dashboard under the
// system's temporary directory: never inside the repository.
func screenshotDir(t *testing.T) string {
	dir := os.Getenv("SLUICE_SCREENSHOTS")
	if dir == "" {
		dir = filepath.Join(os.TempDir(), "sluice-dashboard")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	return dir
}

func (b *browser) listen(ev any) {
	b.mu.Lock()
	defer b.mu.Unlock()
	switch e := ev.(type) {
	case *runtime.EventConsoleAPICalled:
		if e.Type == runtime.ConsoleAPICalledTypeError || e.Type == runtime.ConsoleAPICalledTypeAssert {
			var parts []string
			for _, a := range e.Args {
				parts = append(parts, string(a.Value))
			}
			b.problems = append(b.problems, "console error: "+strings.Join(parts, " "))
		}
	case *runtime.EventExceptionThrown:
		b.problems = append(b.problems, fmt.Sprintf("uncaught exception: %s (%s:%d)", e.ExceptionDetails.Text,
			e.ExceptionDetails.URL, e.ExceptionDetails.LineNumber))
	case *cdplog.EventEntryAdded:
		// The expected document status (visitExpect) is logged too;
		// only that one is not a problem.
		expected := b.expect != 0 && e.Entry.Source == cdplog.EntrySourceNetwork && strings.Contains(e.Entry.Text, fmt.Sprintf("status of %d ", b.expect))
		if e.Entry.Level == cdplog.EntryLevelError && !expected {
			b.problems = append(b.problems, fmt.Sprintf("browser log error (%s): %s %s", e.Entry.Source, e.Entry.Text, e.Entry.URL))
		}
	case *network.EventLoadingFailed:
		if !e.Canceled {
			b.problems = append(b.problems, fmt.Sprintf("request failed: %s %s", e.ErrorText, e.BlockedReason))
		}
	case *network.EventResponseReceived:
		if e.Response.Status >= 400 && !(e.Type == network.ResourceTypeDocument && e.Response.Status == b.expect) {
			b.problems = append(b.problems, fmt.Sprintf("%s %s answered %d", e.Type, e.Response.URL, e.Response.Status))
		}
	}
}

// clean fails the test with every problem seen since the last call.
func (b *browser) clean(where string) {
	b.t.Helper()
	b.mu.Lock()
	ps := b.problems
	b.problems = nil
	b.mu.Unlock()
	for _, p := range ps {
		b.t.Errorf("%s: %s", where, p)
	}
}

// forget drops the problems recorded so far that mention substr: the
// expected refusals a check provoked on purpose.
func (b *browser) forget(substr string) {
	b.mu.Lock()
	defer b.mu.Unlock()
	kept := b.problems[:0]
	for _, p := range b.problems {
		if !strings.Contains(p, substr) {
			kept = append(kept, p)
		}
	}
	b.problems = kept
}

// do runs chromedp steps with a deadline, failing the test on error.
func (b *browser) do(where string, steps ...chromedp.Action[chromedp.Void]) {
	b.t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, 60*time.Second)
	defer cancel()
	if err := chromedp.Do(ctx, steps...); err != nil {
		b.t.Fatalf("%s: %v", where, err)
	}
}

// visit opens a page of the site, waits for it, and checks it is clean.
func (b *browser) visit(path string) {
	b.t.Helper()
	b.visitExpect(path, 0)
}

// visitExpect is visit for a page expected to answer status (e.g. 403).
func (b *browser) visitExpect(path string, status int64) {
	b.t.Helper()
	b.mu.Lock()
	b.expect = status
	b.mu.Unlock()
	b.do("visit "+path, chromedp.Navigate(b.base+path), chromedp.WaitReady(chromedp.CSS("body")))
	b.settle()
	if status != 0 {
		// The browser logs the expected answer as a failed load too.
		b.forget(fmt.Sprintf("status of %d", status))
	}
	b.clean(path)
}

// settle waits until the page's scripts have run (site.js on
// DOMContentLoaded) and its images have loaded.
func (b *browser) settle() {
	b.t.Helper()
	b.do("settle", chromedp.Poll[chromedp.Void](`document.readyState === "complete"`))
}

// signIn signs in with the token through the form.
func (b *browser) signIn(token string) {
	b.t.Helper()
	b.do("sign in", chromedp.Navigate(b.base+"/signin"), chromedp.WaitVisible(chromedp.ID("token")),
		chromedp.SendKeys(chromedp.ID("token"), token), chromedp.Submit(chromedp.ID("token")),
		chromedp.WaitReady(chromedp.CSS("header nav")))
	b.settle()
	b.clean("sign in")
}

// text is the text of the first element matching the CSS selector.
func (b *browser) text(sel string) string {
	b.t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, 30*time.Second)
	defer cancel()
	s, err := chromedp.Run(ctx, chromedp.Text(chromedp.CSS(sel)))
	if err != nil {
		b.t.Fatalf("text of %s: %v", sel, err)
	}
	return strings.TrimSpace(s)
}

// eval evaluates a JavaScript expression in the page.
func eval[T any](b *browser, expr string) T {
	b.t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, 30*time.Second)
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr))
	if err != nil {
		b.t.Fatalf("evaluate %s: %v", expr, err)
	}
	return v
}

// evalAwait evaluates an expression whose value is a promise.
func evalAwait[T any](b *browser, expr string) T {
	b.t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, 30*time.Second)
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr, chromedp.EvalAwaitPromise))
	if err != nil {
		b.t.Fatalf("evaluate %s: %v", expr, err)
	}
	return v
}

// count is how many elements match the CSS selector now.
func (b *browser) count(sel string) int {
	b.t.Helper()
	return eval[int](b, fmt.Sprintf("document.querySelectorAll(%q).length", sel))
}

// shot saves a full-page screenshot as NAME.png in the screenshot folder
// and logs where.
func (b *browser) shot(name string) {
	b.t.Helper()
	ctx, cancel := context.WithTimeout(b.ctx, 30*time.Second)
	defer cancel()
	png, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
	if err != nil {
		b.t.Fatalf("screenshot %s: %v", name, err)
	}
	p := filepath.Join(b.shots, name+".png")
	if err := os.WriteFile(p, png, 0o644); err != nil {
		b.t.Fatal(err)
	}
	b.t.Logf("screenshot: %s", p)
}
