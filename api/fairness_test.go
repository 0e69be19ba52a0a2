package api

import (
	"context"
	"encoding/json"
	"fmt"
	"net/http"
	"sync"
	"testing"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/db/dbtest"
)

// startWorkersHard starts the plate workers and stops them at the end
// without a grace period, so that plates still running are cancelled
// rather than waited for.
func startWorkersHard(t *testing.T, ts *testServer) {
	t.Helper()
	if err := ts.store.StartWorkers(context.Background(), ts.srv.Service().RunPlateJob, 2); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		ctx, cancel := context.WithCancel(context.Background())
		cancel()
		ts.store.StopWorkers(ctx)
	})
}

// small96Body is a 96-well plate of one compound at eight concentrations
// with two controls of each kind, B = 1000.
func small96Body(barcode string) string {
	num := func(v float64) *float64 { return &v }
	req := wire.PlateRequest{ConcUnit: "M", Barcode: barcode, Format: 96, Wells: []wire.Well{
		{Well: "A1", Role: "max_control", Value: num(1000)}, {Well: "B1", Role: "max_control", Value: num(990)},
		{Well: "A12", Role: "min_control", Value: num(10)}, {Well: "B12", Role: "min_control", Value: num(12)},
	}, Fit: &wire.PlateFit{Bootstrap: &wire.BootstrapIn{Resamples: 1000}}}
	for k := 0; k < 8; k++ {
		c := 1e-9 * float64(int(1)<<k)
		req.Wells = append(req.Wells, wire.Well{Well: fmt.Sprintf("C%d", k+2), Role: "sample", CompoundID: "demo-ag-1", Conc: num(c),
			Value: num(10 + 990*c/(c+1e-8) + float64(k%3))})
	}
	b, _ := json.Marshal(req)
	return string(b)
}

// waitStatus polls the store until the plate has the status.
func waitStatus(t *testing.T, store db.Store, id, status string, within time.Duration) {
	t.Helper()
	for deadline := time.Now().Add(within); ; time.Sleep(20 * time.Millisecond) {
		p, err := store.Plate(context.Background(), id)
		if err != nil {
			t.Fatal(err)
		}
		if p.Status == status {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("plate %s is %s after %v, want %s", id, p.Status, within, status)
		}
	}
}

// With two large plates running on both main workers (1536 wells, 128
// curves, B = 10 000: about 4.5e8 units, some 18 s of one core each), a
// 96-well plate posted next is fitted by the small-job lane and answered
// while both large plates still run. In one first-in-first-out queue it
// would wait for one of them to finish. (An ordering check: the time is
// logged, not asserted.)
func TestSmallPlateOvertakesLargeOnes(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, store db.Store) {
		ts := newTestServer(t, store)
		startWorkersHard(t, ts)
		heavy := plate1536CSV()
		var large []string
		for i := range 2 {
			w := ts.do("POST", fmt.Sprintf("/v1/plates?conc_unit=M&format=1536&barcode=HEAVY-%d&resamples=10000&seed=1", i), ScopeSubmit, heavy,
				"Content-Type", "text/csv")
			if w.Code != http.StatusAccepted {
				t.Fatalf("large plate: %d %s", w.Code, w.Body)
			}
			var acc wire.PlateAccepted
			json.Unmarshal(w.Body.Bytes(), &acc)
			large = append(large, acc.PlateID)
		}
		for _, id := range large {
			waitStatus(t, store, id, db.PlateRunning, 30*time.Second)
		}
		t0 := time.Now()
		w := ts.do("POST", "/v1/plates?wait=2m", ScopeSubmit, small96Body("SMALL-1"))
		elapsed := time.Since(t0)
		if w.Code != http.StatusOK {
			t.Fatalf("small plate: %d %s", w.Code, w.Body)
		}
		var v wire.PlateView
		json.Unmarshal(w.Body.Bytes(), &v)
		if v.Status != db.PlateDone {
			t.Fatalf("small plate %s: %s", v.Status, v.Error)
		}
		for _, id := range large {
			p, err := store.Plate(context.Background(), id)
			if err != nil {
				t.Fatal(err)
			}
			if p.Status != db.PlateRunning {
				t.Errorf("large plate %s is %s when the small one is done; want it still running (the small one should not have waited)", id, p.Status)
			}
		}
		t.Logf("small plate posted and done in %v with two large plates running", elapsed.Round(time.Millisecond))
	})
}

// Sixty requests waiting on ?wait for their plates share one status query
// a tick: on a pool of two connections they never hold more than one, and
// another client's request is answered at once meanwhile. Then the workers
// start and every waiter gets its finished plate.
func TestManyWaitersLeaveThePoolFree(t *testing.T) {
	u := dbtest.PostgresURL(t)
	store, err := db.Open(context.Background(), u+"&pool_max_conns=2", "")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(store.Close)
	ts := newTestServer(t, store)
	const n = 60
	var wg sync.WaitGroup
	codes := make(chan int, n)
	for i := range n {
		wg.Go(func() {
			w := ts.do("POST", "/v1/plates?wait=2m", ScopeSubmit, small96Body(fmt.Sprintf("WAIT-%02d", i)))
			codes <- w.Code
		})
	}
	// Every plate stored: the waiters are waiting.
	for deadline := time.Now().Add(30 * time.Second); ; time.Sleep(20 * time.Millisecond) {
		ps, _, err := store.PlateList(context.Background(), db.PlateFilter{Limit: 100})
		if err != nil {
			t.Fatal(err)
		}
		if len(ps) == n {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("%d of %d plates stored after 30 s", len(ps), n)
		}
	}
	maxInUse := 0
	for range 200 { // a second
		maxInUse = max(maxInUse, store.Stats().InUse)
		time.Sleep(5 * time.Millisecond)
	}
	t0 := time.Now()
	if w := ts.do("GET", "/v1/assays", ScopeRead, ""); w.Code != http.StatusOK {
		t.Errorf("GET /v1/assays while %d wait: %d %s", n, w.Code, w.Body)
	}
	if d := time.Since(t0); d > 2*time.Second {
		t.Errorf("GET /v1/assays took %v while %d requests waited", d, n)
	}
	if maxInUse > 1 {
		t.Errorf("%d of %d connections in use while %d requests waited; want at most 1 (the shared status query)", maxInUse, store.Stats().Max, n)
	}
	startWorkersHard(t, ts)
	wg.Wait()
	close(codes)
	for c := range codes {
		if c != http.StatusOK {
			t.Errorf("waiter answered %d, want 200 with its plate", c)
		}
	}
}
