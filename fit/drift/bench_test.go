package drift

import (
	"fmt"
	"math/rand/v2"
	"testing"
	"time"
)

// BenchmarkEvaluate1000 judges a 1 000-point series (one point per plate,
// a plate an hour) with every rule on: issue 12's drift endpoint serves
// 1 000 points within 50 ms end to end.
func BenchmarkEvaluate1000(b *testing.B) {
	rng := rand.New(rand.NewPCG(1, 2))
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	pts := make([]Point, 1000)
	for i := range pts {
		pts[i] = Point{Time: t0.Add(time.Duration(i) * time.Hour), Value: 100 + 5*rng.NormFloat64(), Group: fmt.Sprint("plate-", i)}
	}
	base := Baseline{Mean: 100, SD: 5}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Evaluate(pts, base, nil); err != nil {
			b.Fatal(err)
		}
	}
}
