// Package ingest reads the data users send Sluice — curve CSV files,
// concentration units — into fit's types, with errors that say where the
// input broke.
package ingest

import (
	"fmt"
	"strings"
)

// Unit is a concentration unit; its value is the factor to molar.
type Unit float64

// The concentration units (FACTS §8).
const (
	Molar      Unit = 1
	Millimolar Unit = 1e-3
	Micromolar Unit = 1e-6
	Nanomolar  Unit = 1e-9
	Picomolar  Unit = 1e-12
)

// ParseUnit reads a unit name: M, mM, uM or µM (also μM), nM, pM; "" is M.
func ParseUnit(s string) (Unit, error) {
	switch strings.TrimSpace(s) {
	case "", "M":
		return Molar, nil
	case "mM":
		return Millimolar, nil
	case "uM", "µM", "μM": // micro sign U+00B5 and Greek mu U+03BC
		return Micromolar, nil
	case "nM":
		return Nanomolar, nil
	case "pM":
		return Picomolar, nil
	}
	return 0, fmt.Errorf("unknown concentration unit %q (want M, mM, uM, nM or pM)", s)
}

// ToMolar converts a concentration in this unit to molar.
func (u Unit) ToMolar(c float64) float64 { return c * float64(u) }
