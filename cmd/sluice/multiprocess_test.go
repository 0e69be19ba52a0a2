package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"sluice/db"
	"sluice/db/dbtest"
)

// Queue timing of the processes of TestMultiProcess: the defaults
// (--job-timeout 10m as the ceiling of each job's own timeout,
// --job-rescue-after 1m). A plate here is about 1 s of work, so its own
// timeout (service.JobTimeout) is under a minute, and an orphaned job is
// released within the documented bound, db.RescueBound (deploy/README.md):
// max(timeout, rescue) + River's rescuer interval (30 s) + a new leader's
// election when the dead worker led (21 s).
const (
	// mpKillSlack is added to the documented bound: the span of the
	// test's kills (≤ 10 s: a worker that led may be killed again before
	// anyone else is elected), and 5 s to spare on a loaded machine. Being
	// taken again then also waits for a free worker: a released job
	// queues behind the plates already waiting.
	mpKillSlack = 10*time.Second + 5*time.Second
)

// mpRescueBound is the documented bound for a job whose attempt has the
// given timeout, at the default rescue time, with mpKillSlack.
func mpRescueBound(timeout time.Duration) time.Duration {
	return db.RescueBound(timeout, db.DefaultRescueAfter) + mpKillSlack
}

// proc is one running process of the built binary.
type proc struct {
	name, addr string
	cmd        *exec.Cmd
	log        *lockedBuffer
	exited     chan struct{}
}

// TestMultiProcess runs real processes of the binary on one PostgreSQL:
// one API and two workers. 40 plates are posted while one worker is
// killed with SIGKILL three times and restarted; at the end every
// acknowledged plate is done, each curve is stored once, no job is left
// waiting or running, and each orphaned job was picked up again within
// mpPickupBound (measured, logged). Then a worker gets SIGTERM in the
// middle of a plate with a short grace: the plate is finished once, by the
// other worker.
func TestMultiProcess(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the binary and runs for 1–2 minutes; skipped by -short")
	}
	dbURL := dbtest.PostgresURL(t)
	bin := filepath.Join(t.TempDir(), "sluice")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	env := append(os.Environ(), "SLUICE_DATABASE_URL="+dbURL, "SLUICE_AUTH=off", "SLUICE_FIT_WORKERS=1")
	migrate := exec.Command(bin, "migrate")
	migrate.Env = env
	if out, err := migrate.CombinedOutput(); err != nil {
		t.Fatalf("migrate: %v\n%s", err, out)
	}
	var procs []*proc
	t.Cleanup(func() {
		for _, p := range procs {
			p.cmd.Process.Kill()
			<-p.exited
		}
		if t.Failed() {
			for _, p := range procs {
				t.Logf("log of %s:\n%s", p.name, tail(p.log.String(), 4000))
			}
		}
	})
	start := func(name, role, addr string, grace time.Duration) *proc {
		t.Helper()
		if addr == "" {
			addr = freeAddr(t)
		}
		p := &proc{name: name, addr: addr, log: &lockedBuffer{}, exited: make(chan struct{})}
		p.cmd = exec.Command(bin, "serve", "--role", role, "--addr", addr, "--migrate=false", "--shutdown-grace", grace.String())
		p.cmd.Env = env
		p.cmd.Stdout, p.cmd.Stderr = p.log, p.log
		if err := p.cmd.Start(); err != nil {
			t.Fatal(err)
		}
		go func() { p.cmd.Wait(); close(p.exited) }()
		procs = append(procs, p)
		waitReady(t, p)
		return p
	}
	api := start("api", "api", "", time.Minute)
	w1 := start("worker-1", "worker", "", time.Minute)
	w2 := start("worker-2", "worker", "", time.Minute)
	base := "http://" + api.addr

	ctx := context.Background()
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close(ctx)
	watch := newJobWatch(ctx, t, dbURL)
	defer watch.stop()

	// 40 plates, B = 10 000 (about 0.3 s of fitting each), posted as fast
	// as the API takes them.
	var plates []string
	for i := range 40 {
		id, _ := postPlate(t, base, fmt.Sprintf("MP-%02d", i), 10000, i+1)
		plates = append(plates, id)
	}
	// Kill worker 1 three times while jobs run, restarting it each time.
	type kill struct {
		at      time.Time
		running map[int64]int // job → attempt, running when it died
	}
	var kills []kill
	orphaned := map[[2]int64]bool{} // (job, attempt) running at an earlier kill
	for range 3 {
		time.Sleep(2 * time.Second)
		for len(watch.running()) < 2 { // both slots of a worker busy, at least
			time.Sleep(20 * time.Millisecond)
		}
		k := kill{running: watch.running()}
		for job, attempt := range k.running {
			if orphaned[[2]int64{job, int64(attempt)}] {
				delete(k.running, job) // still waiting since an earlier kill
			}
			orphaned[[2]int64{job, int64(attempt)}] = true
		}
		k.at = time.Now()
		if err := w1.cmd.Process.Kill(); err != nil {
			t.Fatal(err)
		}
		<-w1.exited
		kills = append(kills, k)
		w1 = start("worker-1", "worker", w1.addr, time.Minute)
	}
	// Each plate job's own timeout (service.JobTimeout of its work), as
	// its arguments carry it: all under the rescue time, so the bound is
	// the same for all.
	timeouts := map[int64]time.Duration{}
	rows, err := conn.Query(ctx, "SELECT id, (args->>'timeout_ms')::bigint FROM river_job WHERE kind = $1", db.JobPlateFit)
	if err != nil {
		t.Fatal(err)
	}
	for rows.Next() {
		var job, ms int64
		if err := rows.Scan(&job, &ms); err != nil {
			t.Fatal(err)
		}
		timeouts[job] = time.Duration(ms) * time.Millisecond
		if timeouts[job] < db.MinJobTimeout || timeouts[job] > db.DefaultRescueAfter {
			t.Errorf("job %d: its own timeout %v, want [%v, %v] for a plate of about a second", job, timeouts[job], db.MinJobTimeout, db.DefaultRescueAfter)
		}
	}
	if err := rows.Err(); err != nil || len(timeouts) != 40 {
		t.Fatalf("%d plate jobs' timeouts read (%v), want 40", len(timeouts), err)
	}
	bound := mpRescueBound(db.DefaultRescueAfter)
	t.Logf("documented rescue bound: %v after the attempt began (db.RescueBound), %v with the test's slack", bound-mpKillSlack, bound)
	// Every acknowledged plate done.
	deadline := time.Now().Add(bound + 2*time.Minute)
	for _, id := range plates {
		for {
			var status string
			if err := conn.QueryRow(ctx, "SELECT status FROM plates WHERE id = $1", id).Scan(&status); err != nil {
				t.Fatal(err)
			}
			if status == db.PlateDone {
				break
			}
			if status == db.PlateFailed || time.Now().After(deadline) {
				t.Fatalf("plate %s: %s", id, status)
			}
			time.Sleep(200 * time.Millisecond)
		}
	}
	// Each curve once: 8 curves per plate, 8 distinct keys.
	var curves, keys int
	if err := conn.QueryRow(ctx, "SELECT count(*), count(DISTINCT (plate_id, curve_key)) FROM curve_results WHERE plate_id = ANY($1)", plates).
		Scan(&curves, &keys); err != nil {
		t.Fatal(err)
	}
	if curves != 40*8 || keys != 40*8 {
		t.Errorf("%d curves, %d distinct, want %d", curves, keys, 40*8)
	}
	// No job stuck: every plate job completes. A worker killed after its
	// plate's commit but before River recorded the job leaves a done plate
	// whose job is rescued later (and then finds the plate done), so wait
	// for the rescue bound.
	deadline = time.Now().Add(bound + 30*time.Second)
	for {
		var notDone int
		if err := conn.QueryRow(ctx, "SELECT count(*) FROM river_job WHERE kind = $1 AND state <> 'completed'", db.JobPlateFit).Scan(&notDone); err != nil {
			t.Fatal(err)
		}
		if notDone == 0 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("%d plate jobs not completed", notDone)
		}
		time.Sleep(200 * time.Millisecond)
	}
	// Orphans: jobs running at a kill that were later attempted again.
	orphans := 0
	for i, k := range kills {
		for job, attempt := range k.running {
			taken, ok := watch.retriedAt(job, attempt)
			if !ok {
				continue // worker 2's job, finished where it ran
			}
			orphans++
			released, ok := watch.releasedAt(job, attempt)
			if !ok {
				t.Errorf("job %d was taken again without being seen released", job)
				continue
			}
			t.Logf("kill %d: job %d (attempt %d) released %.1f s after its worker died, taken again after %.1f s",
				i+1, job, attempt, released.Sub(k.at).Seconds(), taken.Sub(k.at).Seconds())
			if wait, b := released.Sub(k.at), mpRescueBound(timeouts[job]); wait > b {
				t.Errorf("job %d waited %v after its worker died, more than %v (db.RescueBound of its %v timeout, and %v slack)",
					job, wait, b, timeouts[job], mpKillSlack)
			}
		}
	}
	if orphans == 0 {
		t.Error("no job was orphaned by the kills; the test proves nothing")
	}

	// SIGTERM mid-job with a 200 ms grace: worker 2 stops (idle, it exits
	// at once), a B = 100 000 plate (about 2.5 s of fitting) goes to worker
	// 1, worker 2 comes back, worker 1 gets SIGTERM while fitting and hands
	// the job back; worker 2 finishes it, once. (A plate that finishes
	// within the grace is TestShutdownFinishesRunningPlate's case.)
	w2.cmd.Process.Signal(syscall.SIGTERM)
	<-w2.exited
	w1.cmd.Process.Signal(syscall.SIGTERM)
	<-w1.exited
	w1 = start("worker-1", "worker", w1.addr, 200*time.Millisecond)
	id, job := postPlate(t, base, "MP-TERM", 100000, 99)
	for watch.state(job) != "running" {
		time.Sleep(20 * time.Millisecond)
	}
	w2 = start("worker-2", "worker", w2.addr, time.Minute)
	if s := watch.state(job); s != "running" {
		t.Fatalf("job %d %s before SIGTERM; the test needs it running", job, s)
	}
	termAt := time.Now()
	if err := w1.cmd.Process.Signal(syscall.SIGTERM); err != nil {
		t.Fatal(err)
	}
	select {
	case <-w1.exited:
		t.Logf("worker 1 exited %.1f s after SIGTERM (%v)", time.Since(termAt).Seconds(), w1.cmd.ProcessState)
	case <-time.After(30 * time.Second):
		t.Fatal("worker 1 did not exit within 30 s of SIGTERM")
	}
	deadline = time.Now().Add(time.Minute)
	for watch.state(job) != "completed" {
		if time.Now().After(deadline) {
			t.Fatalf("job %d: %s a minute after SIGTERM", job, watch.state(job))
		}
		time.Sleep(100 * time.Millisecond)
	}
	// River counts a job stopped by a shutdown as not attempted (its
	// attempt is given back), so the hand-back shows in attempted_by: two
	// different clients took it.
	var status string
	var by []string
	if err := conn.QueryRow(ctx, "SELECT p.status, j.attempted_by, (SELECT count(*) FROM curve_results c WHERE c.plate_id = p.id) "+
		"FROM plates p JOIN river_job j ON j.id = p.job_id WHERE p.id = $1", id).Scan(&status, &by, &curves); err != nil {
		t.Fatal(err)
	}
	if status != db.PlateDone || curves != 8 || len(by) != 2 || by[0] == by[1] {
		t.Errorf("after SIGTERM: plate %s, %d curves, taken by %q; want done, 8, two workers (handed back, finished by the other)", status, curves, by)
	}
}

// postPlate posts the invented 96-well plate and returns its plate and
// job IDs.
func postPlate(t *testing.T, base, barcode string, b, seed int) (string, int64) {
	t.Helper()
	url := fmt.Sprintf("%s/v1/plates?conc_unit=M&format=96&barcode=%s&resamples=%d&seed=%d", base, barcode, b, seed)
	resp, err := http.Post(url, "text/csv", strings.NewReader(invented96CSV()))
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
		t.Fatalf("post %s: %d %s", barcode, resp.StatusCode, body)
	}
	return acc.PlateID, acc.JobID
}

// freeAddr returns a loopback address with a port free a moment ago.
func freeAddr(t *testing.T) string {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	return ln.Addr().String()
}

func waitReady(t *testing.T, p *proc) {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for {
		r, err := http.Get("http://" + p.addr + "/readyz")
		if err == nil {
			r.Body.Close()
			if r.StatusCode == 200 {
				return
			}
		}
		select {
		case <-p.exited:
			t.Fatalf("%s exited before it was ready:\n%s", p.name, p.log)
		default:
		}
		if time.Now().After(deadline) {
			t.Fatalf("%s not ready: %v\n%s", p.name, err, p.log)
		}
		time.Sleep(50 * time.Millisecond)
	}
}

func tail(s string, n int) string {
	if len(s) > n {
		return "…" + s[len(s)-n:]
	}
	return s
}

// jobWatch polls River's table every 100 ms and remembers, per job, when
// each attempt was first seen (an attempt begins when a worker fetches the
// job, so the first sighting is within 100 ms of its start unless it ran
// shorter than that).
type jobWatch struct {
	mu      sync.Mutex
	states  map[int64]string
	attempt map[int64]int
	seen    map[[2]int64]time.Time // (job, attempt) → first seen
	// released: (job, attempt) → first seen waiting again after that
	// attempt (rescued, or handed back).
	released map[[2]int64]time.Time
	cancel   context.CancelFunc
	done     chan struct{}
}

func newJobWatch(ctx context.Context, t *testing.T, dbURL string) *jobWatch {
	conn, err := pgx.Connect(ctx, dbURL)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(ctx)
	w := &jobWatch{states: map[int64]string{}, attempt: map[int64]int{}, seen: map[[2]int64]time.Time{}, released: map[[2]int64]time.Time{}, cancel: cancel, done: make(chan struct{})}
	go func() {
		defer close(w.done)
		defer conn.Close(context.Background())
		tick := time.NewTicker(100 * time.Millisecond)
		defer tick.Stop()
		for {
			rows, err := conn.Query(ctx, "SELECT id, state, attempt FROM river_job")
			if err == nil {
				now := time.Now()
				w.mu.Lock()
				for rows.Next() {
					var id int64
					var state string
					var attempt int
					if rows.Scan(&id, &state, &attempt) != nil {
						break
					}
					w.states[id], w.attempt[id] = state, attempt
					k := [2]int64{id, int64(attempt)}
					if _, ok := w.seen[k]; !ok {
						w.seen[k] = now
					}
					waiting := state == "available" || state == "retryable" || state == "scheduled"
					if _, ok := w.released[k]; !ok && waiting && attempt > 0 {
						w.released[k] = now
					}
				}
				w.mu.Unlock()
				rows.Close()
			}
			select {
			case <-ctx.Done():
				return
			case <-tick.C:
			}
		}
	}()
	return w
}

func (w *jobWatch) stop() { w.cancel(); <-w.done }

// running returns the jobs running at the last poll with their attempt.
func (w *jobWatch) running() map[int64]int {
	w.mu.Lock()
	defer w.mu.Unlock()
	out := map[int64]int{}
	for id, s := range w.states {
		if s == "running" {
			out[id] = w.attempt[id]
		}
	}
	return out
}

func (w *jobWatch) state(id int64) string {
	w.mu.Lock()
	defer w.mu.Unlock()
	return w.states[id]
}

// retriedAt returns when the attempt after attempt was first seen.
func (w *jobWatch) retriedAt(id int64, attempt int) (time.Time, bool) {
	w.mu.Lock()
	defer w.mu.Unlock()
	at, ok := w.seen[[2]int64{id, int64(attempt + 1)}]
	return at, ok
}

// releasedAt returns when the job was first seen waiting again after
// attempt.
func (w *jobWatch) releasedAt(id int64, attempt int) (time.Time, bool) {
	w.mu.Lock()
	defer w.mu.Unlock()
	at, ok := w.released[[2]int64{id, int64(attempt)}]
	return at, ok
}
