package membrane

import (
	"errors"
	"math"
)

// GHKVoltage returns the zero-current (reversal) potential in mV of a
// membrane permeable to the given ions with relative permeabilities perm
// (by ion name; missing means 0), at tempC.
//
// For monovalent ions only this is the Goldman–Hodgkin–Katz voltage
// equation (Goldman 1943; Hodgkin & Katz 1949, J Physiol 108:37; FACTS §7):
//
//	V = (RT/F)·ln((Σ₊ Pᵢ[Xᵢ]o + Σ₋ Pⱼ[Xⱼ]i) / (Σ₊ Pᵢ[Xᵢ]i + Σ₋ Pⱼ[Xⱼ]o))
//
// With a divalent ion (Ca²⁺) there is no closed form; V is then the root of
// the summed GHK current equation
//
//	Σ Pᵢzᵢ²·u·([Xᵢ]i − [Xᵢ]o·e^(−zᵢu)) / (1 − e^(−zᵢu)) = 0,  u = VF/RT,
//
// found by bisection (the sum rises monotonically with V).
func GHKVoltage(ions Ions, perm map[string]float64, tempC float64) (float64, error) {
	var num, den float64
	mono := true
	any := false
	for _, ion := range ions.Sorted() {
		p := perm[ion.Name]
		if p < 0 {
			return math.NaN(), errors.New("permeability of " + ion.Name + " is negative")
		}
		if p == 0 {
			continue
		}
		any = true
		switch ion.Valence {
		case 1:
			num += p * ion.Out
			den += p * ion.In
		case -1:
			num += p * ion.In
			den += p * ion.Out
		default:
			mono = false
		}
	}
	for name, p := range perm {
		if _, ok := ions[name]; !ok && p != 0 {
			return math.NaN(), errors.New("permeability given for " + name + " but no concentrations for it")
		}
	}
	if !any {
		return math.NaN(), errors.New("no ion has a positive permeability")
	}
	vt := ThermalVoltage(tempC)
	if mono {
		return vt * math.Log(num/den), nil
	}
	current := func(v float64) float64 {
		u := v / vt
		var s float64
		for _, ion := range ions.Sorted() {
			p := perm[ion.Name]
			if p == 0 {
				continue
			}
			z := float64(ion.Valence)
			zu := z * u
			var f float64
			if math.Abs(zu) < 1e-9 {
				f = z * (ion.In - ion.Out) // limit u→0 of z²u(…)/(1−e^(−zu))
			} else {
				f = z * z * u * (ion.In - ion.Out*math.Exp(-zu)) / (1 - math.Exp(-zu))
			}
			s += p * f
		}
		return s
	}
	lo, hi := -300.0, 300.0
	if current(lo) > 0 || current(hi) < 0 {
		return math.NaN(), errors.New("no reversal potential within ±300 mV")
	}
	for i := 0; i < 200 && hi-lo > 1e-12; i++ {
		mid := (lo + hi) / 2
		if current(mid) > 0 {
			hi = mid
		} else {
			lo = mid
		}
	}
	return (lo + hi) / 2, nil
}
