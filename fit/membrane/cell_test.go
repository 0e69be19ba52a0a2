package membrane

import (
	"errors"
	"math"
	"testing"
)

func TestCellValidate(t *testing.T) {
	for name, c := range Presets {
		if err := c.Validate(); err != nil {
			t.Errorf("preset %s: %v", name, err)
		}
	}
	neuron := func(edit func(c *Cell)) Cell {
		p := Presets["neuron"]
		c := Cell{TempC: p.TempC, Ions: Ions{}, Resting: map[string]float64{}}
		for k, v := range p.Ions {
			c.Ions[k] = v
		}
		for k, v := range p.Resting {
			c.Resting[k] = v
		}
		edit(&c)
		return c
	}
	for _, tc := range []struct {
		field string
		cell  Cell
	}{
		{"temperature_c", neuron(func(c *Cell) { c.TempC = 61 })},
		{"temperature_c", neuron(func(c *Cell) { c.TempC = math.NaN() })},
		{"ions.li", neuron(func(c *Cell) { c.Ions["li"] = Ion{Name: "li", Valence: 1, Out: 1, In: 1} })},
		{"ions.k", neuron(func(c *Cell) { c.Ions["k"] = Ion{Name: "k", Valence: 1, Out: 0, In: 140} })},
		{"ions.na", neuron(func(c *Cell) { c.Ions["na"] = Ion{Name: "na", Valence: 1, Out: math.Inf(1), In: 12} })},
		{"resting_conductance_ns.cl", neuron(func(c *Cell) { c.Resting["cl"] = -1 })},
		{"resting_conductance_ns.cl", neuron(func(c *Cell) { delete(c.Ions, "cl") })},
		{"resting_conductance_ns", neuron(func(c *Cell) { c.Resting = map[string]float64{"k": 0} })},
	} {
		err := tc.cell.Validate()
		var ce *CellError
		if !errors.As(err, &ce) || ce.Field != tc.field {
			t.Errorf("%s: got %v", tc.field, err)
		}
	}
	// A conductance of 0 for an ion without concentrations is no error.
	if err := neuron(func(c *Cell) { c.Resting["ca"] = 0; delete(c.Ions, "ca") }).Validate(); err != nil {
		t.Errorf("zero conductance without ion: %v", err)
	}
}
