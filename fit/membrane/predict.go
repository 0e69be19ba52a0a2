package membrane

import (
	"context"
	"fmt"
	"math"
	"sort"
)

// Channel is the ligand-gated conductance: Count channels of single-channel
// conductance ConductancePS (pS) reversing at Reversal (mV), optionally
// blocked by extracellular Mg²⁺ (MgOut mM; 0 for no block).
type Channel struct {
	Count         float64
	ConductancePS float64
	Reversal      float64
	MgOut         float64
}

// MaxConductance is N·γ in nS.
func (c Channel) MaxConductance() float64 { return c.Count * c.ConductancePS * 1e-3 }

// Point is the prediction at one agonist concentration.
type Point struct {
	Conc         float64 // molar
	OpenFraction float64 // P_open
	G            float64 // g_L = N·γ·P_open, nS (before Mg block)
	Block        float64 // unblocked fraction B(V); 1 without Mg
	V, Delta     float64 // steady potential and V − V_rest, mV
}

// Prediction is the steady potential across concentrations.
type Prediction struct {
	Rest   float64
	Points []Point
	// Multistable is true when, at some concentration, the Mg²⁺-blocked
	// conductance admits more than one steady state; the one reached by
	// raising the concentration from rest is reported.
	Multistable bool
}

// Predict returns V(c) and ΔV(c) for the resting conductances rest plus the
// channel opened to po(c):
//
//	g_L = N·γ·P_open(c),  V = (Σ gᵢEᵢ + g_L·B(V)·E_rev) / (Σ gᵢ + g_L·B(V))
//
// with B ≡ 1 without Mg²⁺ (chord-conductance equation, FACTS §7). With Mg²⁺
// the equation is solved for V at each concentration, in ascending order,
// taking the root nearest the previous one (continuation from rest); every
// concentration gets a full scan of the equation (4 001 grid points), so
// that Multistable is true whenever some concentration has more than one
// root the grid can tell apart (see scanSteps). Points come back in the
// order of concs.
//
// ctx is checked before each concentration; when it is done Predict returns
// an error wrapping ctx.Err() and no prediction.
func Predict(ctx context.Context, rest []Conductance, ch Channel, po func(conc float64) float64, concs []float64) (Prediction, error) {
	vr := ChordVoltage(rest...)
	pred := Prediction{Rest: vr, Points: make([]Point, len(concs))}
	eq := newMgEquation(rest, ch)
	prev := vr
	for _, i := range ascending(concs) {
		if err := ctx.Err(); err != nil {
			return Prediction{}, fmt.Errorf("potential prediction: %w", err)
		}
		p := Point{Conc: concs[i], OpenFraction: po(concs[i])}
		p.G = ch.MaxConductance() * p.OpenFraction
		var multi bool
		if ch.MgOut <= 0 || p.G == 0 {
			p.V = eq.chord(p.G)
		} else {
			p.V, multi = eq.scan(p.G, prev)
		}
		pred.Multistable = pred.Multistable || multi
		p.Block = 1
		if ch.MgOut > 0 {
			p.Block = MgBlock(ch.MgOut, p.V)
		}
		p.Delta = p.V - vr
		prev = p.V
		pred.Points[i] = p
	}
	return pred, nil
}

// ascending returns the indices of concs in ascending order of
// concentration, equal ones in input order.
func ascending(concs []float64) []int {
	order := make([]int, len(concs))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return concs[order[a]] < concs[order[b]] })
	return order
}

// steady returns the steady potential with ligand conductance g, continuing
// from near: the root of the Mg²⁺-block equation nearest near, the same
// number a full scan gives (mgEquation.nearest), or the chord voltage
// without Mg²⁺.
func steady(eq *mgEquation, g, near float64) float64 {
	if eq.mg <= 0 || g == 0 {
		return eq.chord(g)
	}
	return eq.nearest(g, near)
}

// ThresholdConc returns the lowest molar concentration in [lo, hi] at
// which V reaches threshold (mV), by a scan in 0.01-decade steps refined by
// bisection, following the same continuation as Predict; ok is false when V
// never reaches it there. ctx is checked at every step; when it is done
// ThresholdConc returns an error wrapping ctx.Err().
func ThresholdConc(ctx context.Context, rest []Conductance, ch Channel, po func(float64) float64, threshold, lo, hi float64) (conc float64, ok bool, err error) {
	vr := ChordVoltage(rest...)
	above := func(v float64) bool {
		if ch.Reversal >= vr {
			return v >= threshold
		}
		return v <= threshold
	}
	if above(vr) {
		return 0, true, nil
	}
	eq := newMgEquation(rest, ch)
	prev := vr
	a := math.Log10(lo)
	for x := a; x <= math.Log10(hi)+1e-12; x += 0.01 {
		if err := ctx.Err(); err != nil {
			return 0, false, fmt.Errorf("threshold concentration: %w", err)
		}
		v := steady(&eq, ch.MaxConductance()*po(math.Pow(10, x)), prev)
		if above(v) {
			l, r := x-0.01, x
			for i := 0; i < 60; i++ {
				m := (l + r) / 2
				vm := steady(&eq, ch.MaxConductance()*po(math.Pow(10, m)), prev)
				if above(vm) {
					r = m
				} else {
					l = m
				}
			}
			return math.Pow(10, r), true, nil
		}
		prev = v
	}
	return 0, false, nil
}
