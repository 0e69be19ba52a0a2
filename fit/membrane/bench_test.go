package membrane

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

// benchBand is the potential request: the neuron preset with an
// NMDA-type channel (200 channels of 50 pS reversing at 0 mV, 1 mM Mg²⁺),
// 200 concentrations from 1 nM to 1 mM, and B = 1000 draws of a Hill curve
// (invented: log EC50 −6 ± 0.1, slope 1.2 ± 0.1).
func benchBand() ([]Conductance, Channel, []func(float64) float64, []float64) {
	rest := Presets["neuron"].RestingConductances()
	ch := Channel{Count: 200, ConductancePS: 50, Reversal: 0, MgOut: 1}
	concs := make([]float64, 200)
	for i := range concs {
		concs[i] = 1e-9 * math.Pow(10, 6*float64(i)/199)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	draws := make([]func(float64) float64, 1000)
	for d := range draws {
		draws[d] = hillPo(1, math.Pow(10, -6+0.1*rng.NormFloat64()), 1.2+0.1*rng.NormFloat64())
	}
	return rest, ch, draws, concs
}

// BenchmarkBand1000x200 compares the band of the request computed
// as before (a full scan of the Mg²⁺ equation per draw and concentration:
// Predict for every draw, on one goroutine) with Band's continuation, on
// one goroutine and on two.
func BenchmarkBand1000x200(b *testing.B) {
	rest, ch, draws, concs := benchBand()
	ctx := context.Background()
	b.Run("scan", func(b *testing.B) {
		for b.Loop() {
			for _, d := range draws {
				if _, err := Predict(ctx, rest, ch, d, concs); err != nil {
					b.Fatal(err)
				}
			}
		}
	})
	for _, w := range []int{1, 2} {
		b.Run("continued/workers="+string(rune('0'+w)), func(b *testing.B) {
			for b.Loop() {
				if _, _, err := Band(ctx, rest, ch, draws, concs, 0.95, w); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkCostUnit calibrates membrane.Cost: one full scan of the Mg²⁺
// equation of the cell, reported per evaluation of the equation
// (ns/eval), on one goroutine.
func BenchmarkCostUnit(b *testing.B) {
	rest, ch, _, _ := benchBand()
	eq := newMgEquation(rest, ch)
	g := ch.MaxConductance() * 0.5
	for b.Loop() {
		eq.scan(g, -70)
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/(scanSteps+1+35), "ns/eval")
}
