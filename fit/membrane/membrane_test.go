package membrane

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.6f, want %.6f ± %g", what, got, want, tol)
	}
}

// FACTS §7 "Constants": F and R from the exact SI-2019 constants, and RT/F
// at the tabulated temperatures [C].
func TestConstantsFACTS(t *testing.T) {
	near(t, "F", Faraday, 96485.33212331, 1e-6)
	near(t, "R", GasConstant, 8.31446261815324, 1e-13)
	for _, c := range []struct{ t, rtf, dec float64 }{
		{20, 25.261712, 58.16724}, {25, 25.692579, 59.15935}, {37, 26.726659, 61.54041},
	} {
		near(t, "RT/F", ThermalVoltage(c.t), c.rtf, 1e-6)
		near(t, "ln10·RT/F", math.Ln10*ThermalVoltage(c.t), c.dec, 1e-5)
	}
	near(t, "RT/F at 6.3 °C", ThermalVoltage(6.3), 24.081138, 1e-6)
	near(t, "RT/F at 18.5 °C", ThermalVoltage(18.5), 25.132452, 1e-6)
}

// FACTS §7: Nernst potentials of the squid axon at 20 °C and of mammalian
// muscle and neuron at 37 °C ([C] values, tolerance 0.01 mV).
func TestNernstFACTS(t *testing.T) {
	for _, c := range []struct {
		name          string
		z             int
		out, in, temp float64
		want          float64
	}{
		{"squid K", 1, 20, 400, 20, -75.68}, {"squid Na", 1, 440, 50, 20, 54.94}, {"squid Cl", -1, 560, 40, 20, -66.67},
		{"muscle Na", 1, 145, 12, 37, 66.60}, {"muscle K", 1, 4, 155, 37, -97.74},
		{"muscle Ca", 2, 1.5, 0.0001, 37, 128.50}, {"muscle Cl", -1, 123, 4.2, 37, -90.26},
		{"neuron K", 1, 5, 140, 37, -89.06}, {"neuron Na 145/15", 1, 145, 15, 37, 60.63},
		{"neuron Ca", 2, 2, 0.0001, 37, 132.34}, {"neuron Cl 110/10", -1, 110, 10, 37, -64.09},
		{"neuron Cl 120/7", -1, 120, 7, 37, -75.95},
	} {
		near(t, c.name, Nernst(c.z, c.out, c.in, c.temp), c.want, 0.01)
	}
	// Common practice, as properties: K⁺ 5/140 mM at 37 °C gives E_K near
	// −90 mV; Na⁺ 145/12 gives +60 to +67 mV.
	if e := Nernst(1, 5, 140, 37); e < -92 || e > -88 {
		t.Errorf("E_K = %v, want near −90", e)
	}
	if e := Nernst(1, 145, 12, 37); e < 60 || e > 67 {
		t.Errorf("E_Na = %v, want +60 to +67", e)
	}
	if !math.IsNaN(Nernst(0, 1, 1, 37)) || !math.IsNaN(Nernst(1, 0, 1, 37)) {
		t.Error("Nernst accepts z = 0 or a zero concentration")
	}
}

func squid(clIn float64) Ions {
	return Ions{"k": {"k", 1, 20, 400}, "na": {"na", 1, 440, 50}, "cl": {"cl", -1, 560, clIn}}
}

// FACTS §7 "Squid axon" GHK checks (tolerance 0.01 mV) and the neuron GHK
// value and cation-channel reversal potentials [C].
func TestGHKFACTS(t *testing.T) {
	rest := map[string]float64{"k": 1, "na": 0.04, "cl": 0.45}
	for _, c := range []struct {
		clIn, temp, want float64
		perm             map[string]float64
	}{
		{40, 20, -62.268, rest}, {52, 20, -59.927, rest}, {40, 6.3, -59.358, rest}, {40, 18.5, -61.950, rest},
		{40, 20, 42.366, map[string]float64{"k": 1, "na": 20, "cl": 0.45}},
	} {
		v, err := GHKVoltage(squid(c.clIn), c.perm, c.temp)
		if err != nil {
			t.Fatal(err)
		}
		near(t, "squid GHK", v, c.want, 0.01)
	}
	neuron := Ions{"k": {"k", 1, 5, 140}, "na": {"na", 1, 145, 15}, "cl": {"cl", -1, 110, 10}}
	v, _ := GHKVoltage(neuron, rest, 37)
	near(t, "neuron GHK", v, -67.343, 0.01)
	cation := Ions{"k": {"k", 1, 5, 140}, "na": {"na", 1, 145, 12}}
	v, _ = GHKVoltage(cation, map[string]float64{"na": 1, "k": 1}, 37)
	near(t, "PNa = PK", v, -0.354, 0.001)
	v, _ = GHKVoltage(cation, map[string]float64{"na": 0.9, "k": 1}, 37)
	near(t, "PNa/PK = 0.9", v, -2.859, 0.001)
	// One permeant ion: GHK is its Nernst potential (also through the
	// numerical path with a divalent ion).
	ca := Ions{"ca": {"ca", 2, 2, 0.0001}}
	v, err := GHKVoltage(ca, map[string]float64{"ca": 1}, 37)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "Ca alone", v, Nernst(2, 2, 0.0001, 37), 1e-6)
	k := Ions{"k": {"k", 1, 5, 140}}
	v, _ = GHKVoltage(k, map[string]float64{"k": 3}, 37)
	near(t, "K alone", v, Nernst(1, 5, 140, 37), 1e-9)
	if _, err := GHKVoltage(k, map[string]float64{"na": 1}, 37); err == nil {
		t.Error("a permeability without concentrations was accepted")
	}
}

// predict is Predict with a background context, failing the test on an
// error.
func predict(t *testing.T, rest []Conductance, ch Channel, po func(float64) float64, concs []float64) Prediction {
	t.Helper()
	p, err := Predict(context.Background(), rest, ch, po, concs)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

var restFACTS = []Conductance{{10, -89.06}, {0.5, 66.60}, {2, -64.09}}

// hillPo is P_open = Pmax/(1 + (EC50/A)^nH) (FACTS §7).
func hillPo(pmax, ec50, nh float64) func(float64) float64 {
	return func(a float64) float64 {
		if a == 0 {
			return 0
		}
		return pmax / (1 + math.Pow(ec50/a, nh))
	}
}

// FACTS §7 chord-conductance checks ([DER], tolerance 0.01 mV), the GABA-A
// shunt, the unitary current and the Mg²⁺ block.
func TestChordFACTS(t *testing.T) {
	near(t, "rest", ChordVoltage(restFACTS...), -78.838, 0.01)
	ch := Channel{Count: 200, ConductancePS: 50, Reversal: 0}
	p := predict(t, restFACTS, ch, hillPo(0.8, 10e-6, 1.5), []float64{30e-6})
	near(t, "P_open", p.Points[0].OpenFraction, 0.670888, 1e-6)
	near(t, "g_L", p.Points[0].G, 6.708876, 1e-6)
	near(t, "V", p.Points[0].V, -51.303, 0.01)
	near(t, "ΔV", p.Points[0].Delta, 27.535, 0.01)
	// GABA-A: 10 nS at E_Cl depolarises a cell resting below E_Cl (a shunt).
	near(t, "GABA-A", ChordVoltage(append(restFACTS, Conductance{10, -64.09})...), -72.284, 0.01)
	near(t, "unitary current", UnitaryCurrent(50, -70, 0), -3.5, 1e-12)
	near(t, "Mg block −70", MgBlock(1, -70), 0.04447, 1e-5)
	near(t, "Mg block −40", MgBlock(1, -40), 0.23016, 1e-5)
}

// Common practice, as properties: a cell dominated by K⁺ conductance rests
// near E_K; opening more cation channels moves V monotonically toward their
// reversal potential and never past it — with and without Mg²⁺ block.
func TestChordProperties(t *testing.T) {
	ek := Nernst(1, 5, 140, 37)
	v := ChordVoltage(Conductance{100, ek}, Conductance{0.5, 66.6}, Conductance{1, -64.09})
	if math.Abs(v-ek) > 2 {
		t.Errorf("K-dominated cell rests at %.2f mV, E_K %.2f", v, ek)
	}
	rng := rand.New(rand.NewPCG(6, 7))
	concs := make([]float64, 60)
	for i := range concs {
		concs[i] = 1e-9 * math.Pow(10, 0.1*float64(i))
	}
	for trial := 0; trial < 200; trial++ {
		rest := []Conductance{{1 + 20*rng.Float64(), ek}, {0.1 + rng.Float64(), 66.6}, {5 * rng.Float64(), -64.09}}
		erev := -10 + 20*rng.Float64()
		ch := Channel{Count: 10 + 1000*rng.Float64(), ConductancePS: 5 + 60*rng.Float64(), Reversal: erev}
		if trial%2 == 1 {
			ch.MgOut = 1
		}
		p := predict(t, rest, ch, hillPo(0.3+0.7*rng.Float64(), 1e-7*math.Pow(10, 3*rng.Float64()), 0.7+2*rng.Float64()), concs)
		prev := p.Rest
		for _, pt := range p.Points {
			if pt.V < prev-1e-9 || pt.V > erev+1e-9 {
				t.Fatalf("trial %d: V went from %.4f to %.4f (E_rev %.2f, Mg %v)", trial, prev, pt.V, erev, ch.MgOut)
			}
			prev = pt.V
		}
	}
}

// With Mg²⁺ the equation can have three steady states; continuation from
// rest picks the hyperpolarised one, and says the cell is multistable.
func TestMgBistability(t *testing.T) {
	rest := []Conductance{{2, -90}}
	ch := Channel{Count: 1000, ConductancePS: 50, Reversal: 0, MgOut: 1.2}
	p := predict(t, rest, ch, func(float64) float64 { return 0.3 }, []float64{1e-5})
	if !p.Multistable {
		t.Fatalf("no bistability found: V = %v", p.Points[0].V)
	}
	if p.Points[0].V > -60 {
		t.Errorf("continuation from rest gave %.2f mV, want the hyperpolarised state", p.Points[0].V)
	}
	// At that potential the residual of the chord equation is zero.
	pt := p.Points[0]
	g := pt.G * MgBlock(1.2, pt.V)
	near(t, "self-consistent V", (2*-90+g*0)/(2+g), pt.V, 1e-6)
}

func TestThresholdConc(t *testing.T) {
	ch := Channel{Count: 200, ConductancePS: 50, Reversal: 0}
	po := hillPo(0.8, 10e-6, 1.5)
	c, ok, err := ThresholdConc(context.Background(), restFACTS, ch, po, -60, 1e-12, 1)
	if err != nil || !ok {
		t.Fatal("threshold not reached", err)
	}
	p := predict(t, restFACTS, ch, po, []float64{c})
	near(t, "V at the threshold concentration", p.Points[0].V, -60, 1e-6)
	if _, ok, _ := ThresholdConc(context.Background(), restFACTS, ch, po, 5, 1e-12, 1); ok {
		t.Error("a threshold past E_rev was reached")
	}
}
