package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"strings"
	"sync"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// lockedBuffer collects the server's log for a failing test's message.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// startServe runs serve on a loopback port, on PostgreSQL at dbURL or else
// an embedded store in dir, until the returned cancel is called; the
// channel gives serve's exit code.
func startServe(t *testing.T, dbURL, dir, role string, grace time.Duration) (base string, cancel context.CancelFunc, done <-chan int, logs *lockedBuffer) {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	cfg := &serveConfig{Addr: ln.Addr().String(), DatabaseURL: dbURL, DataDir: dir, BodyLimit: 1 << 20, AuthDisabled: true, LogLevel: "info",
		FitWorkers: 1, Role: role, ShutdownGrace: grace}
	ctx, cancel := context.WithCancel(context.Background())
	logs = &lockedBuffer{}
	codes := make(chan int, 1)
	go func() { codes <- serve(ctx, cfg, ln, slog.New(slog.NewJSONHandler(logs, nil))) }()
	base = "http://" + ln.Addr().String()
	deadline := time.Now().Add(30 * time.Second)
	for {
		r, err := http.Get(base + "/readyz")
		if err == nil {
			r.Body.Close()
			if r.StatusCode == 200 {
				break
			}
		}
		if time.Now().After(deadline) {
			cancel()
			t.Fatalf("not ready: %v\n%s", err, logs)
		}
		time.Sleep(20 * time.Millisecond)
	}
	return base, cancel, codes, logs
}

// A shutdown signal in the middle of a plate lets the plate finish within
// the grace period, on both engines: it ends done, with every curve once,
// and the process exits 0. (Cancelling the context is what SIGTERM does
// through signal.NotifyContext in runServe.)
func TestShutdownFinishesRunningPlate(t *testing.T) {
	t.Run("sqlite", func(t *testing.T) { shutdownMidPlate(t, "", t.TempDir()) })
	t.Run("postgres", func(t *testing.T) { shutdownMidPlate(t, dbtest.PostgresURL(t), "") })
}

func shutdownMidPlate(t *testing.T, dbURL, dir string) {
	base, cancel, done, logs := startServe(t, dbURL, dir, "all", 2*time.Minute)
	defer cancel()
	// B = 4000 on one fit worker: a few seconds of work, so the signal
	// arrives while the curves are being fitted.
	resp, err := http.Post(base+"/v1/plates?conc_unit=M&format=96&barcode=LK-TERM&resamples=4000&seed=1", "text/csv", strings.NewReader(invented96CSV()))
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	var acc struct {
		PlateID string `json:"plate_id"`
		JobID   int64  `json:"job_id"`
	}
	if err := json.Unmarshal(body, &acc); resp.StatusCode != 202 || err != nil {
		t.Fatalf("%d %s", resp.StatusCode, body)
	}
	deadline := time.Now().Add(30 * time.Second)
	for status := ""; status != db.PlateRunning; {
		if time.Now().After(deadline) || status == db.PlateDone {
			t.Fatalf("plate %s before the signal; the test needs it running", status)
		}
		r, err := http.Get(base + "/v1/plates/" + acc.PlateID)
		if err != nil {
			t.Fatal(err)
		}
		var v struct{ Status string }
		json.NewDecoder(r.Body).Decode(&v)
		r.Body.Close()
		status = v.Status
		time.Sleep(5 * time.Millisecond)
	}
	cancel()
	select {
	case code := <-done:
		if code != 0 {
			t.Errorf("exit %d\n%s", code, logs)
		}
	case <-time.After(2 * time.Minute):
		t.Fatalf("serve did not return\n%s", logs)
	}
	store, err := db.Open(context.Background(), dbURL, dir)
	if err != nil {
		t.Fatal(err)
	}
	defer store.Close()
	ctx := context.Background()
	p, err := store.Plate(ctx, acc.PlateID)
	if err != nil {
		t.Fatal(err)
	}
	cs, err := store.PlateCurves(ctx, acc.PlateID)
	if err != nil {
		t.Fatal(err)
	}
	keys := map[string]int{}
	for _, c := range cs {
		keys[c.Key]++
	}
	if p.Status != db.PlateDone || len(cs) != 8 || len(keys) != 8 || p.CurvesDone != 8 {
		t.Errorf("after shutdown: plate %s, %d curves (%d keys), progress %d/%d\n%s", p.Status, len(cs), len(keys), p.CurvesDone, p.CurvesTotal, logs)
	}
	j, err := store.Job(ctx, acc.JobID)
	if err != nil || j.State != "completed" || j.Attempt != 1 {
		t.Errorf("job after shutdown: %+v, %v", j, err)
	}
}

// A worker replica answers its probes and its metrics, and nothing of the
// API.
func TestWorkerRoleServesOnlyHealth(t *testing.T) {
	base, cancel, done, logs := startServe(t, "", t.TempDir(), "worker", 10*time.Second)
	for path, want := range map[string]int{"/healthz": 200, "/readyz": 200, "/metrics": 200, "/v1/openapi.json": 404,
		"/v1/fits": 404, "/v1/plates/x": 404} {
		r, err := http.Get(base + path)
		if err != nil {
			t.Fatal(err)
		}
		r.Body.Close()
		if r.StatusCode != want {
			t.Errorf("GET %s: %d, want %d", path, r.StatusCode, want)
		}
	}
	r, err := http.Post(base+"/v1/fits", "application/json", strings.NewReader(`{}`))
	if err != nil {
		t.Fatal(err)
	}
	r.Body.Close()
	if r.StatusCode != 404 {
		t.Errorf("POST /v1/fits on a worker: %d", r.StatusCode)
	}
	cancel()
	if code := <-done; code != 0 {
		t.Errorf("exit %d\n%s", code, logs)
	}
	if !strings.Contains(logs.String(), fmt.Sprintf(`"role":%q`, "worker")) {
		t.Errorf("log does not name the role:\n%s", logs)
	}
}

// A request waiting for a plate (?wait=) does not hold up the shutdown: it
// answers 202 with where to look, and serve exits at once rather than at
// the end of the grace period.
func TestShutdownAnswersWaitingRequests(t *testing.T) {
	base, cancel, done, logs := startServe(t, "", t.TempDir(), "api", 2*time.Minute) // no workers: the plate stays queued
	defer cancel()
	type answer struct {
		code int
		body string
	}
	answers := make(chan answer, 1)
	go func() {
		resp, err := http.Post(base+"/v1/plates?conc_unit=M&format=96&barcode=LK-WAIT&wait=2m", "text/csv", strings.NewReader(invented96CSV()))
		if err != nil {
			answers <- answer{0, err.Error()}
			return
		}
		defer resp.Body.Close()
		b, _ := io.ReadAll(resp.Body)
		answers <- answer{resp.StatusCode, string(b)}
	}()
	// Shut down once the plate (job 1) is stored and its request waits.
	for deadline := time.Now().Add(30 * time.Second); time.Now().Before(deadline); time.Sleep(20 * time.Millisecond) {
		r, err := http.Get(base + "/v1/jobs/1")
		if err != nil {
			t.Fatal(err)
		}
		r.Body.Close()
		if r.StatusCode == 200 {
			break
		}
	}
	start := time.Now()
	cancel()
	select {
	case a := <-answers:
		if a.code != 202 || !strings.Contains(a.body, `"plate_id"`) {
			t.Errorf("waiting request: %d %s", a.code, a.body)
		}
	case <-time.After(30 * time.Second):
		t.Fatalf("the waiting request was not answered\n%s", logs)
	}
	if code := <-done; code != 0 || time.Since(start) > 10*time.Second {
		t.Errorf("exit %d after %v\n%s", code, time.Since(start), logs)
	}
}
