package membrane

// Cell is a cell's temperature, ions and resting conductances (nS, by ion
// name; each reverses at that ion's Nernst potential).
type Cell struct {
	TempC   float64
	Ions    Ions
	Resting map[string]float64
}

// Presets are typical cells. The concentrations are typical textbook
// values (FACTS §7; compare the tables of mammalian ion concentrations in
// Hille, Ion Channels of Excitable Membranes, 3rd ed., ch. 1), not
// measurements of any one cell; the resting conductances are illustrative
// (the neuron's are those of FACTS §7's chord-conductance example; the
// muscle fibre's follow the typical textbook statement that resting
// skeletal muscle conducts Cl⁻ about twice as well as K⁺). Enter measured
// values for real work.
var Presets = map[string]Cell{
	"neuron": {TempC: 37,
		Ions: Ions{
			"k":  {Name: "k", Valence: 1, Out: 5, In: 140},
			"na": {Name: "na", Valence: 1, Out: 145, In: 12},
			"cl": {Name: "cl", Valence: -1, Out: 110, In: 10},
			"ca": {Name: "ca", Valence: 2, Out: 2, In: 0.0001},
		},
		Resting: map[string]float64{"k": 10, "na": 0.5, "cl": 2}},
	"muscle": {TempC: 37,
		Ions: Ions{
			"k":  {Name: "k", Valence: 1, Out: 4, In: 155},
			"na": {Name: "na", Valence: 1, Out: 145, In: 12},
			"cl": {Name: "cl", Valence: -1, Out: 123, In: 4.2},
			"ca": {Name: "ca", Valence: 2, Out: 1.5, In: 0.0001},
		},
		Resting: map[string]float64{"k": 10, "na": 0.3, "cl": 20}},
}

// RestingConductances returns the cell's resting conductances with their
// Nernst potentials, in ion-name order.
func (c Cell) RestingConductances() []Conductance {
	var out []Conductance
	for _, ion := range c.Ions.Sorted() {
		if g := c.Resting[ion.Name]; g > 0 {
			out = append(out, Conductance{G: g, E: Nernst(ion.Valence, ion.Out, ion.In, c.TempC)})
		}
	}
	return out
}
