package membrane

import (
	"fmt"
	"sort"
)

// Ion is one permeant species.
type Ion struct {
	Name    string  // "k", "na", "cl", "ca", …
	Valence int     // +1, −1, +2
	Out, In float64 // mM
}

// Valences of the ions Sluice knows by name.
var Valences = map[string]int{"k": 1, "na": 1, "cl": -1, "ca": 2}

// Ions maps names to concentrations.
type Ions map[string]Ion

// Sorted returns the ions in name order.
func (is Ions) Sorted() []Ion {
	out := make([]Ion, 0, len(is))
	for _, i := range is {
		out = append(out, i)
	}
	sort.Slice(out, func(a, b int) bool { return out[a].Name < out[b].Name })
	return out
}

// Check reports the first ion whose concentrations are not positive.
func (is Ions) Check() error {
	for _, i := range is.Sorted() {
		if !(i.Out > 0) || !(i.In > 0) {
			return fmt.Errorf("ion %s: concentrations must be > 0 mM (out %g, in %g)", i.Name, i.Out, i.In)
		}
		if i.Valence == 0 {
			return fmt.Errorf("ion %s: valence 0", i.Name)
		}
	}
	return nil
}
