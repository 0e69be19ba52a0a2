package membrane

import (
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
// taking the root nearest the previous one (continuation from rest).
// Points come back in the order of concs.
func Predict(rest []Conductance, ch Channel, po func(conc float64) float64, concs []float64) Prediction {
	vr := ChordVoltage(rest...)
	pred := Prediction{Rest: vr, Points: make([]Point, len(concs))}
	order := make([]int, len(concs))
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return concs[order[a]] < concs[order[b]] })
	prev := vr
	for _, i := range order {
		p := Point{Conc: concs[i], OpenFraction: po(concs[i])}
		p.G = ch.MaxConductance() * p.OpenFraction
		var multi bool
		p.V, multi = solve(rest, ch, p.G, prev)
		pred.Multistable = pred.Multistable || multi
		p.Block = 1
		if ch.MgOut > 0 {
			p.Block = MgBlock(ch.MgOut, p.V)
		}
		p.Delta = p.V - vr
		prev = p.V
		pred.Points[i] = p
	}
	return pred
}

// solve returns the steady potential with ligand conductance g and whether
// more than one exists; near is the starting potential for continuation.
func solve(rest []Conductance, ch Channel, g, near float64) (v float64, multiple bool) {
	if ch.MgOut <= 0 || g == 0 {
		return ChordVoltage(append(rest, Conductance{G: g, E: ch.Reversal})...), false
	}
	var gs, gse float64
	lo, hi := ch.Reversal, ch.Reversal
	for _, c := range rest {
		gs += c.G
		gse += c.G * c.E
		lo, hi = math.Min(lo, c.E), math.Max(hi, c.E)
	}
	// F(V) = (Σg + g·B(V))·V − (ΣgE + g·B(V)·E_rev): every root lies
	// between the smallest and largest reversal potential.
	f := func(v float64) float64 {
		gb := g * MgBlock(ch.MgOut, v)
		return (gs+gb)*v - (gse + gb*ch.Reversal)
	}
	const steps = 4000
	var roots []float64
	x0, f0 := lo, f(lo)
	if f0 == 0 {
		roots = append(roots, lo)
	}
	for k := 1; k <= steps; k++ {
		x1 := lo + (hi-lo)*float64(k)/steps
		f1 := f(x1)
		if f1 == 0 {
			roots = append(roots, x1)
		} else if f0*f1 < 0 {
			a, b, fa := x0, x1, f0
			for i := 0; i < 100 && b-a > 1e-12; i++ {
				m := (a + b) / 2
				if fm := f(m); fm*fa > 0 {
					a, fa = m, fm
				} else {
					b = m
				}
			}
			roots = append(roots, (a+b)/2)
		}
		x0, f0 = x1, f1
	}
	if len(roots) == 0 {
		return math.NaN(), false
	}
	best := roots[0]
	for _, r := range roots[1:] {
		if math.Abs(r-near) < math.Abs(best-near) {
			best = r
		}
	}
	return best, len(roots) > 1
}

// ThresholdConc returns the lowest molar concentration in [lo, hi] at
// which V reaches threshold (mV), by a scan in 0.01-decade steps refined by
// bisection, following the same continuation as Predict; ok is false when V
// never reaches it there.
func ThresholdConc(rest []Conductance, ch Channel, po func(float64) float64, threshold, lo, hi float64) (conc float64, ok bool) {
	vr := ChordVoltage(rest...)
	above := func(v float64) bool {
		if ch.Reversal >= vr {
			return v >= threshold
		}
		return v <= threshold
	}
	if above(vr) {
		return 0, true
	}
	prev := vr
	a := math.Log10(lo)
	for x := a; x <= math.Log10(hi)+1e-12; x += 0.01 {
		v, _ := solve(rest, ch, ch.MaxConductance()*po(math.Pow(10, x)), prev)
		if above(v) {
			l, r := x-0.01, x
			for i := 0; i < 60; i++ {
				m := (l + r) / 2
				vm, _ := solve(rest, ch, ch.MaxConductance()*po(math.Pow(10, m)), prev)
				if above(vm) {
					r = m
				} else {
					l = m
				}
			}
			return math.Pow(10, r), true
		}
		prev = v
	}
	return 0, false
}
