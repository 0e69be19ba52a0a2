package fit

import (
	"fmt"
	"math"
)

// The plausible range of drug concentrations, molar. Above 0.1 M (100 mM) a
// drug-like compound is far beyond its usual solubility (stock solutions
// are typically 10 mM in DMSO) and the solution is mostly solute; below
// 1e-15 M (1 fM) a millilitre holds fewer than a million molecules, below
// any ligand-gated channel's affinity. Values outside it are almost always
// a unit mistake: nanomolar numbers sent as molar read 1e3–1e5 M.
const (
	MaxPlausibleConc = 0.1
	MinPlausibleConc = 1e-15
)

// ImplausibleConcs says why tested concentrations from lo to hi molar (the
// vehicle aside; lo ≤ hi, both > 0) lie outside [MinPlausibleConc,
// MaxPlausibleConc] and what that suggests, or returns "" when they lie
// inside. A result carrying the note is flagged FlagImplausibleConc.
func ImplausibleConcs(lo, hi float64) string {
	switch {
	case hi > MaxPlausibleConc:
		return fmt.Sprintf("concentrations reach %.3g M, above the plausible %g M for a drug: were they sent in µM or nM without saying so (conc_unit)?", hi, MaxPlausibleConc)
	case lo < MinPlausibleConc:
		return fmt.Sprintf("concentrations go down to %.3g M, below the plausible %g M for a drug: were molar values converted twice, or sent in the wrong unit?", lo, MinPlausibleConc)
	}
	return ""
}

// ImplausibleEC50 says why an EC50 of ec50 molar lies outside the plausible
// range, or returns "" when it lies inside.
func ImplausibleEC50(ec50 float64) string {
	if ec50 > MaxPlausibleConc || ec50 < MinPlausibleConc {
		return fmt.Sprintf("the EC50, %.3g M, lies outside the plausible range of drug concentrations (%g to %g M): check the concentration unit", ec50, MinPlausibleConc, MaxPlausibleConc)
	}
	return ""
}

// checkPlausible flags a curve whose tested concentrations (the vehicle
// aside) or reported EC50 lie outside [MinPlausibleConc, MaxPlausibleConc],
// and says in a note what was found and what it suggests.
func (r *Result) checkPlausible() {
	d := r.design
	if lo, hi, ok := d.finiteRange(); ok {
		if note := ImplausibleConcs(math.Pow(10, lo), math.Pow(10, hi)); note != "" {
			r.addFlag(FlagImplausibleConc)
			r.addNote("%s", note)
		}
	}
	if !r.HasPotency() || r.has(FlagImplausibleConc) {
		return
	}
	if note := ImplausibleEC50(math.Pow(10, r.LogEC50().Estimate)); note != "" {
		r.addFlag(FlagImplausibleConc)
		r.addNote("%s", note)
	}
}

// has reports whether the result carries flag f.
func (r *Result) has(f string) bool {
	for _, g := range r.Flags {
		if g == f {
			return true
		}
	}
	return false
}
