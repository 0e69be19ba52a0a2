package schild

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"sluice/fit"
)

// BenchmarkSchild1000 is the Schild dataset: 5 curves × 10
// concentrations × 3 replicates (invented, pKB 8, s 1), the global fits and
// B = 1000 on all cores.
func BenchmarkSchild1000(b *testing.B) {
	rng := rand.New(rand.NewPCG(5, 10))
	var cs []Curve
	for _, ab := range []float64{0, 1e-8, 3e-8, 1e-7, 1e-6} {
		L := -6.0
		if ab > 0 {
			L += math.Log10(1 + ab*1e8)
		}
		c := Curve{AntagonistConc: ab}
		for k := 0; k < 10; k++ {
			a := 1e-8 * math.Pow(10, 0.5*float64(k)) * math.Pow(10, L+6)
			for r := 0; r < 3; r++ {
				c.Points = append(c.Points, fit.Point{Conc: a, Response: fit.Hill.Value([]float64{0, 100, L, 1.1}, a) + 4*rng.NormFloat64()})
			}
		}
		cs = append(cs, c)
	}
	b.ReportAllocs()
	for b.Loop() {
		r, err := Analyze(context.Background(), cs, &Settings{Resamples: 1000, Seed: 1})
		if err != nil || r.Global == nil || r.Global.Failed > 0 {
			b.Fatalf("%v %+v", err, r)
		}
	}
}
