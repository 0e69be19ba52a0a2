package fit

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

// benchCurves returns n invented 30-point curves (10 concentrations ×
// triplicate) with potencies spread over three decades and slopes 0.7–2.5.
func benchCurves(n int) []Curve {
	rng := rand.New(rand.NewPCG(11, 13))
	cs := make([]Curve, n)
	for i := range cs {
		truth := []float64{rng.NormFloat64() * 2, 100 + rng.NormFloat64()*5, -8 + 3*rng.Float64(), 0.7 + 1.8*rng.Float64()}
		cs[i] = simulatedCurve(rng, truth, 5)
	}
	return cs
}

// BenchmarkFit is one 30-point four-parameter fit from self-start values.
func BenchmarkFit(b *testing.B) {
	c := benchCurves(1)[0]
	b.ReportAllocs()
	for b.Loop() {
		if _, err := Fit(c, nil); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkRefit is the bootstrap's inner step: one warm-started refit of a
// resample, which must not allocate.
func BenchmarkRefit(b *testing.B) {
	c := benchCurves(1)[0]
	r, _ := Fit(c, nil)
	sv := newSolver(r.set, r.design, true)
	theta := r.Estimates()
	copy(sv.ybuf, r.design.ybar)
	copy(sv.wbuf, r.design.w)
	for l := range sv.ybuf {
		sv.ybuf[l] += 2 * math.Sin(float64(l))
	}
	b.ReportAllocs()
	for b.Loop() {
		if !sv.refit(theta, nil) {
			b.Fatal("refit failed")
		}
	}
}

// BenchmarkBootstrap1000 is one curve with B = 1000 BCa on one worker.
func BenchmarkBootstrap1000(b *testing.B) {
	c := benchCurves(1)[0]
	b.ReportAllocs()
	for b.Loop() {
		r, _ := Fit(c, nil)
		if err := Bootstrap(context.Background(), r, &BootSettings{Resamples: 1000, Seed: 1, Workers: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkCostUnit calibrates cost.Work: a warm-started Hill refit (the
// bulk of every bootstrap), reported per unit, i.e. per level, parameter
// and LM evaluation (ns/unit), on one goroutine.
func BenchmarkCostUnit(b *testing.B) {
	c := benchCurves(1)[0]
	r, _ := Fit(c, nil)
	sv := newSolver(r.set, r.design, true)
	theta := r.Estimates()
	copy(sv.ybuf, r.design.ybar)
	copy(sv.wbuf, r.design.w)
	for l := range sv.ybuf {
		sv.ybuf[l] += 2 * math.Sin(float64(l))
	}
	var units float64
	for b.Loop() {
		if !sv.refit(theta, nil) {
			b.Fatal("refit failed")
		}
		units += float64(sv.res.Evaluations * r.Levels * len(r.Params))
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/units, "ns/unit")
}

// BenchmarkFitModels is one 30-point fit of each model on the same Hill
// data (hill5 and bell search for their global optimum), and of Hill on a
// flat curve (every start is tried, each to the iteration limit at worst).
func BenchmarkFitModels(b *testing.B) {
	c := benchCurves(1)[0]
	flat := simulatedCurve(rand.New(rand.NewPCG(3, 5)), []float64{40, 40, -7, 1}, 5)
	for _, bc := range []struct {
		name string
		c    Curve
		m    Model
	}{{"hill", c, Hill}, {"hill5", c, Hill5}, {"bell", c, Bell}, {"hill-flat", flat, Hill}} {
		b.Run(bc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Fit(bc.c, &Settings{Model: bc.m}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
