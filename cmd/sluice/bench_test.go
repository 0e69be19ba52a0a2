package main

import (
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"sluice/fit"
)

// plateCSV is an invented 128-curve screening plate: each curve 10
// concentrations in half-log steps from 1 nM, in triplicate (30 points),
// potencies over three decades and slopes 0.7–2.5, noise 5 % of the window.
func plateCSV(curves int) string {
	rng := rand.New(rand.NewPCG(128, 30))
	var b strings.Builder
	b.WriteString("curve,conc,response\n")
	for k := 0; k < curves; k++ {
		truth := []float64{rng.NormFloat64() * 2, 100 + rng.NormFloat64()*5, -8 + 3*rng.Float64(), 0.7 + 1.8*rng.Float64()}
		for i := 0; i < 10; i++ {
			c := 1e-9 * math.Pow(10, 0.5*float64(i))
			for r := 0; r < 3; r++ {
				fmt.Fprintf(&b, "cpd-%03d,%.6g,%.6g\n", k, c, fit.Hill.Value(truth, c)+5*rng.NormFloat64())
			}
		}
	}
	return b.String()
}

// BenchmarkFitCommandPlate is `sluice fit --bootstrap 1000 --format json`
// on the 128-curve plate: parse, fit, B = 1000 BCa for every curve, and
// write the JSON.
func BenchmarkFitCommandPlate(b *testing.B) {
	in := plateCSV(128)
	b.ReportAllocs()
	for b.Loop() {
		if code := run([]string{"fit", "-", "--unit", "M", "--bootstrap", "1000", "--format", "json"}, strings.NewReader(in), io.Discard, io.Discard); code != 0 {
			b.Fatalf("exit %d", code)
		}
	}
}
