package membrane

import (
	"fmt"
	"math"
	"sort"
)

// CellError says which part of a cell is unusable. Field is named as in the
// API's request: "temperature_c", "ions.<name>", "resting_conductance_ns"
// or "resting_conductance_ns.<name>".
type CellError struct {
	Field string
	Err   error
}

func (e *CellError) Error() string { return e.Field + ": " + e.Err.Error() }

func (e *CellError) Unwrap() error { return e.Err }

// Limits of a cell's temperature, °C.
const (
	MinTempC = -5
	MaxTempC = 60
)

// Validate checks a cell: a temperature from MinTempC to MaxTempC; ions
// known by name (Valences) with finite concentrations > 0 mM; finite
// resting conductances ≥ 0 nS, each > 0 only for an ion with
// concentrations; and at least one resting conductance > 0, or the resting
// potential is undefined. Names are checked in order, so the error is the
// same on every call; it is a *CellError.
func (c Cell) Validate() error {
	if !finite(c.TempC) || c.TempC < MinTempC || c.TempC > MaxTempC {
		return &CellError{"temperature_c", fmt.Errorf("temperature must be %d to %d °C", MinTempC, MaxTempC)}
	}
	for _, name := range sortedKeys(c.Ions) {
		ion := c.Ions[name]
		if _, ok := Valences[name]; !ok || ion.Valence != Valences[name] {
			return &CellError{"ions." + name, fmt.Errorf("unknown ion %q (want k, na, cl or ca)", name)}
		}
		if !(ion.Out > 0) || !(ion.In > 0) || !finite(ion.Out) || !finite(ion.In) {
			return &CellError{"ions." + name, fmt.Errorf("out and in must be > 0 mM")}
		}
	}
	conducts := false
	for _, name := range sortedKeys(c.Resting) {
		g := c.Resting[name]
		field := "resting_conductance_ns." + name
		if !finite(g) || g < 0 {
			return &CellError{field, fmt.Errorf("conductance must be ≥ 0 nS")}
		}
		if _, ok := c.Ions[name]; !ok && g > 0 {
			return &CellError{field, fmt.Errorf("no concentrations for %s in cell.ions", name)}
		}
		conducts = conducts || g > 0
	}
	if !conducts {
		return &CellError{"resting_conductance_ns", fmt.Errorf("at least one resting conductance must be > 0")}
	}
	return nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func sortedKeys[V any](m map[string]V) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}
