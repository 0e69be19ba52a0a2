package db_test

import (
	"context"
	"math/rand/v2"
	"os"
	"slices"
	"testing"
	"time"

	"sluice/db"
)

// BenchmarkSeededReads times the read paths on a database filled by
// `sluice seed` (DEVELOPERS.md, Benchmarks), named by
// SLUICE_BENCH_DATABASE_URL; without it the benchmark is skipped. Each
// sub-benchmark draws its keys at random (seeded) from the seeded names
// and reports the p50 and p95 of one call, over loopback.
func BenchmarkSeededReads(b *testing.B) {
	url := os.Getenv("SLUICE_BENCH_DATABASE_URL")
	if url == "" {
		b.Skip("SLUICE_BENCH_DATABASE_URL is not set (a database filled by sluice seed)")
	}
	ctx := context.Background()
	s, err := db.Open(ctx, url, "")
	if err != nil {
		b.Fatal(err)
	}
	defer s.Close()
	assays, err := s.Assays(ctx)
	if err != nil || len(assays) == 0 {
		b.Fatalf("assays: %d, %v", len(assays), err)
	}
	compounds, err := s.Compounds(ctx)
	if err != nil || len(compounds) == 0 {
		b.Fatalf("compounds: %d, %v", len(compounds), err)
	}
	// Plates to read: the first of an assay's QC series each.
	var plates []string
	for _, a := range assays {
		qs, err := s.PlateQCSeries(ctx, a.ID, "z_prime", time.Time{}, time.Time{})
		if err != nil {
			b.Fatal(err)
		}
		for i := 0; i < len(qs); i += 97 {
			plates = append(plates, qs[i].PlateID)
		}
	}
	end := time.Date(2026, 7, 1, 0, 0, 0, 0, time.UTC)
	cases := []struct {
		name string
		call func(rng *rand.Rand) (int, error)
	}{
		{"ListPlates/assay-90-days", func(rng *rand.Rand) (int, error) {
			to := end.Add(-time.Duration(rng.IntN(4*365)) * 24 * time.Hour)
			ps, err := s.DriftPlates(ctx, assays[rng.IntN(len(assays))].ID, to.Add(-90*24*time.Hour), to)
			return len(ps), err
		}},
		{"ReadPlate/plate+wells+curves", func(rng *rand.Rand) (int, error) {
			id := plates[rng.IntN(len(plates))]
			if _, err := s.Plate(ctx, id); err != nil {
				return 0, err
			}
			ws, err := s.Wells(ctx, id)
			if err != nil {
				return 0, err
			}
			cs, err := s.PlateCurves(ctx, id)
			return len(ws) + len(cs), err
		}},
		{"CompoundCurves/all-assays", func(rng *rand.Rand) (int, error) {
			cs, err := s.CompoundCurves(ctx, db.CurveFilter{CompoundID: compounds[rng.IntN(len(compounds))].ID})
			return len(cs), err
		}},
		{"CompoundCurves/one-assay", func(rng *rand.Rand) (int, error) {
			cs, err := s.CompoundCurves(ctx, db.CurveFilter{CompoundID: compounds[rng.IntN(len(compounds))].ID,
				AssayID: assays[rng.IntN(len(assays))].ID})
			return len(cs), err
		}},
		{"PlateQCSeries/z_prime-all-time", func(rng *rand.Rand) (int, error) {
			qs, err := s.PlateQCSeries(ctx, assays[rng.IntN(len(assays))].ID, "z_prime", time.Time{}, time.Time{})
			return len(qs), err
		}},
		// The first page of an assay's compound table. Its summaries are
		// filled by the service (a read of the table, or a plate job);
		// 0 rows means none has run on this database yet.
		{"PotencySummaries/first-page", func(rng *rand.Rand) (int, error) {
			rs, err := s.PotencySummaries(ctx, db.PotencyPage{AssayID: assays[rng.IntN(len(assays))].ID, Sort: db.SortCompound, Limit: 51})
			return len(rs), err
		}},
		{"PotencySummaries/-msr-first-page", func(rng *rand.Rand) (int, error) {
			rs, err := s.PotencySummaries(ctx, db.PotencyPage{AssayID: assays[rng.IntN(len(assays))].ID, Sort: db.SortMSR, Desc: true, Limit: 51})
			return len(rs), err
		}},
	}
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			rng := rand.New(rand.NewPCG(1, 2))
			times := make([]time.Duration, 0, b.N)
			rows := 0
			for b.Loop() {
				t0 := time.Now()
				n, err := c.call(rng)
				times = append(times, time.Since(t0))
				if err != nil {
					b.Fatal(err)
				}
				rows += n
			}
			slices.Sort(times)
			q := func(p float64) float64 { return float64(times[int(p*float64(len(times)-1))].Microseconds()) / 1000 }
			b.ReportMetric(q(0.5), "p50-ms")
			b.ReportMetric(q(0.95), "p95-ms")
			b.ReportMetric(float64(rows)/float64(len(times)), "rows/op")
		})
	}
}
