package api

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
)

// BenchmarkPostFit drives POST /v1/fits (a 30-point curve, no bootstrap,
// stored) over loopback TCP from 1, 4 and 16 concurrent clients in this
// process, on each engine, and reports throughput and latency percentiles. The load
// generator shares the two cores with the server, so the figures are
// conservative.
func BenchmarkPostFit(b *testing.B) {
	engines := []struct {
		name string
		open func(testing.TB) db.Store
	}{{"sqlite", dbtest.SQLite}, {"postgres", dbtest.Postgres}}
	rng := rand.New(rand.NewPCG(1, 1))
	var pts []string
	for i := 0; i < 10; i++ {
		c := 1e-9 * math.Pow(10, 0.5*float64(i))
		for r := 0; r < 3; r++ {
			y := fit.Hill.Value([]float64{0, 100, -7, 1.2}, c) + 4*rng.NormFloat64()
			pts = append(pts, fmt.Sprintf(`{"conc":%g,"response":%.3f}`, c, y))
		}
	}
	body := `{"model":"hill","conc_unit":"M","points":[` + strings.Join(pts, ",") + `]}`
	for _, eng := range engines {
		for _, clients := range []int{1, 4, 16} {
			b.Run(fmt.Sprintf("%s/clients=%d", eng.name, clients), func(b *testing.B) {
				store := eng.open(b)
				srv, err := New(Config{}, Deps{Store: store, Registry: prometheus.NewRegistry()})
				if err != nil {
					b.Fatal(err)
				}
				secret, hash := NewToken()
				ctx := b.Context()
				store.Write(ctx, func(w db.Writer) error {
					return w.InsertToken(ctx, &db.Token{ID: "bench", Name: "bench", Scope: ScopeSubmit, Hash: hash, CreatedAt: time.Now()})
				})
				hs := httptest.NewServer(srv.Handler())
				defer hs.Close()
				client := &http.Client{Transport: &http.Transport{MaxIdleConnsPerHost: clients}}
				lat := make([]time.Duration, b.N)
				var next atomic.Int64
				var failed atomic.Int64
				var wg sync.WaitGroup
				b.ResetTimer()
				start := time.Now()
				for w := 0; w < clients; w++ {
					wg.Add(1)
					go func() {
						defer wg.Done()
						for {
							i := int(next.Add(1)) - 1
							if i >= b.N {
								return
							}
							req, _ := http.NewRequest("POST", hs.URL+"/v1/fits", strings.NewReader(body))
							req.Header.Set("Content-Type", "application/json")
							req.Header.Set("Authorization", "Bearer "+secret)
							t0 := time.Now()
							resp, err := client.Do(req)
							if err != nil {
								failed.Add(1)
								continue
							}
							io.Copy(io.Discard, resp.Body)
							resp.Body.Close()
							lat[i] = time.Since(t0)
							if resp.StatusCode != http.StatusCreated {
								failed.Add(1)
							}
						}
					}()
				}
				wg.Wait()
				elapsed := time.Since(start)
				b.StopTimer()
				if n := failed.Load(); n > 0 {
					b.Fatalf("%d of %d requests failed", n, b.N)
				}
				slices.Sort(lat)
				b.ReportMetric(float64(b.N)/elapsed.Seconds(), "req/s")
				b.ReportMetric(float64(lat[b.N/2].Microseconds())/1000, "p50-ms")
				b.ReportMetric(float64(lat[b.N*99/100].Microseconds())/1000, "p99-ms")
			})
		}
	}
}
