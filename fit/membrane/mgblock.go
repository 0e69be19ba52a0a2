package membrane

import "math"

// MgBlock is the fraction of an NMDA-type conductance left unblocked by
// extracellular Mg²⁺ at potential v (mV) (Jahr & Stevens 1990, J Neurosci
// 10:3178, their fit of the macroscopic block; FACTS §7):
//
//	B(V) = 1 / (1 + [Mg²⁺]o/3.57 mM · e^(−0.062·V))
func MgBlock(mgOut, v float64) float64 {
	return 1 / (1 + mgOut/3.57*math.Exp(-0.062*v))
}
