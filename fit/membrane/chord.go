package membrane

import "math"

// Conductance is a conductance in nS with its reversal potential in mV.
type Conductance struct {
	G, E float64
}

// ChordVoltage returns the steady potential of parallel conductances, the
// conductance-weighted mean of their reversal potentials (chord-conductance
// equation; common practice, FACTS §7):
//
//	V = Σ gᵢEᵢ / Σ gᵢ
//
// It is NaN when the total conductance is not positive.
func ChordVoltage(cs ...Conductance) float64 {
	var g, ge float64
	for _, c := range cs {
		g += c.G
		ge += c.G * c.E
	}
	if !(g > 0) {
		return math.NaN()
	}
	return ge / g
}

// UnitaryCurrent returns the single-channel current in pA of a channel of
// conductance gammaPS (pS) at v with reversal potential erev (mV):
// i = γ(V − E_rev).
func UnitaryCurrent(gammaPS, v, erev float64) float64 {
	return gammaPS * (v - erev) * 1e-3
}
