package membrane

import "math"

// Physical constants, exact in the SI since 2019 (CODATA 2018; FACTS §7).
const (
	ElementaryCharge = 1.602176634e-19             // C
	Avogadro         = 6.02214076e23               // 1/mol
	Boltzmann        = 1.380649e-23                // J/K
	Faraday          = ElementaryCharge * Avogadro // C/mol, 96485.33212…
	GasConstant      = Boltzmann * Avogadro        // J/(mol·K), 8.31446261815324
	ZeroCelsius      = 273.15                      // K
)

// ThermalVoltage returns RT/F in mV at tempC °C.
func ThermalVoltage(tempC float64) float64 {
	return 1e3 * GasConstant * (tempC + ZeroCelsius) / Faraday
}

// Nernst returns the equilibrium potential in mV of an ion of valence z
// with concentrations out and in (any one unit) at tempC:
//
//	E = (RT/zF)·ln([X]o/[X]i)
//
// It is NaN for z = 0 or a concentration that is not positive.
func Nernst(z int, out, in, tempC float64) float64 {
	if z == 0 || !(out > 0) || !(in > 0) {
		return math.NaN()
	}
	return ThermalVoltage(tempC) / float64(z) * math.Log(out/in)
}
