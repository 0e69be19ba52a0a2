package api

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	dto "github.com/prometheus/client_model/go"

	"sluice/db"
	"sluice/db/dbtest"
	"sluice/fit"
	"sluice/fit/plate"
)

// plate1536CSV is an invented 1536-well plate as long CSV: 128 compounds ×
// 11 concentrations (half-log from 0.1 nM), one well each, in rows of 11
// with 64 max and 64 min controls in columns 1 and 48.
func plate1536CSV() string {
	rng := rand.New(rand.NewPCG(1536, 1))
	f := plate.Plate1536
	var b strings.Builder
	b.WriteString("well,role,compound_id,conc,value\n")
	k := 0
	for r := 0; r < 32; r++ {
		fmt.Fprintf(&b, "%s,max_control,,,%.2f\n", f.Name(plate.Well{Row: r, Col: 0}), 2000+40*rng.NormFloat64())
		fmt.Fprintf(&b, "%s,max_control,,,%.2f\n", f.Name(plate.Well{Row: r, Col: 1}), 2000+40*rng.NormFloat64())
		fmt.Fprintf(&b, "%s,min_control,,,%.2f\n", f.Name(plate.Well{Row: r, Col: 46}), 200+40*rng.NormFloat64())
		fmt.Fprintf(&b, "%s,min_control,,,%.2f\n", f.Name(plate.Well{Row: r, Col: 47}), 200+40*rng.NormFloat64())
		for blk := 0; blk < 4; blk++ { // 4 compounds per row, 11 columns each
			cpd := fmt.Sprintf("demo-cpd-%04d", k)
			theta := []float64{0, 1, -9 + 3*rng.Float64(), 0.7 + 1.5*rng.Float64()}
			k++
			for i := 0; i < 11; i++ {
				c := 1e-10 * math.Pow(10, 0.5*float64(i))
				y := 200 + 1800*fit.Hill.Value(theta, c) + 40*rng.NormFloat64()
				fmt.Fprintf(&b, "%s,sample,%s,%g,%.2f\n", f.Name(plate.Well{Row: r, Col: 2 + 11*blk + i}), cpd, c, y)
			}
		}
	}
	return b.String()
}

// BenchmarkPlate1536 posts the 1536-well plate as CSV over loopback with
// B = 1000 BCa and waits until every curve is stored, on each engine. It
// reports the split: accept (parse, validate, store plate + wells + job),
// fit (QC and all 128 curves), and the rest (queue pick-up and storing the
// results).
func BenchmarkPlate1536(b *testing.B) {
	body := plate1536CSV()
	for _, eng := range []struct {
		name string
		open func(testing.TB) db.Store
	}{{"sqlite", dbtest.SQLite}, {"postgres", dbtest.Postgres}} {
		b.Run(eng.name, func(b *testing.B) {
			store := eng.open(b)
			srv, err := New(Config{AuthDisabled: true}, Deps{Store: store})
			if err != nil {
				b.Fatal(err)
			}
			if err := store.StartWorkers(context.Background(), srv.Service().RunPlateJob, 2); err != nil {
				b.Fatal(err)
			}
			defer store.StopWorkers(context.Background())
			hs := httptest.NewServer(srv.Handler())
			defer hs.Close()
			var accept, total time.Duration
			fitBefore := 0.0
			for i := 0; b.Loop(); i++ {
				t0 := time.Now()
				resp, err := http.Post(hs.URL+fmt.Sprintf("/v1/plates?conc_unit=M&format=1536&barcode=BENCH-%d&resamples=1000&seed=1", i), "text/csv", strings.NewReader(body))
				if err != nil || resp.StatusCode != http.StatusAccepted {
					b.Fatalf("post: %v %v", err, resp.Status)
				}
				var acc struct {
					PlateID string `json:"plate_id"`
				}
				decodeBody(resp, &acc)
				t1 := time.Now()
				for {
					p, err := store.Plate(context.Background(), acc.PlateID)
					if err != nil {
						b.Fatal(err)
					}
					if p.Status == db.PlateDone {
						break
					}
					if p.Status == db.PlateFailed {
						b.Fatal(p.Error)
					}
					time.Sleep(2 * time.Millisecond)
				}
				accept += t1.Sub(t0)
				total += time.Since(t0)
			}
			fitSum := histogramSum(srv) - fitBefore
			n := float64(b.N)
			b.ReportMetric(accept.Seconds()/n, "accept-s")
			b.ReportMetric(fitSum/n, "fit-s")
			b.ReportMetric((total.Seconds()-accept.Seconds()-fitSum)/n, "pickup+store-s")
			b.ReportMetric(total.Seconds()/n, "wall-s")
		})
	}
}

func histogramSum(s *Server) float64 {
	var m dto.Metric
	s.metrics.plateDuration.Write(&m)
	return m.GetHistogram().GetSampleSum()
}

func decodeBody(resp *http.Response, v any) {
	defer resp.Body.Close()
	json.NewDecoder(resp.Body).Decode(v)
}
