package service

import (
	"context"
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"sluice/api/wire"
)

// potentialGrid spans the requested positive concentrations, log-spaced,
// with each requested one in it exactly; a single concentration gets a
// decade either side; the vehicle alone gives no line.
func TestPotentialGrid(t *testing.T) {
	concs := []float64{0, 3e-5, 1e-7, 3e-6, 1e-7}
	g := potentialGrid(concs)
	if len(g) < potentialGridPoints || g[0] != 1e-7 || g[len(g)-1] != 3e-5 || !slices.IsSorted(g) {
		t.Fatalf("grid of %d from %g to %g", len(g), g[0], g[len(g)-1])
	}
	for i := 1; i < len(g); i++ {
		if g[i] == g[i-1] {
			t.Errorf("repeat %g", g[i])
		}
		// Log-spaced: no step is wider than the grid's own.
		if step := math.Log10(g[i] / g[i-1]); step > math.Log10(3e-5/1e-7)/(potentialGridPoints-1)+1e-12 {
			t.Errorf("step %g at %g", step, g[i])
		}
	}
	for _, c := range concs[1:] {
		if !slices.Contains(g, c) {
			t.Errorf("%g is not in the grid", c)
		}
	}
	if g := potentialGrid([]float64{1e-6}); len(g) != potentialGridPoints || math.Abs(g[0]-1e-7) > 1e-19 || math.Abs(g[len(g)-1]-1e-5) > 1e-17 ||
		!slices.Contains(g, 1e-6) {
		t.Errorf("single concentration: %d points, %g to %g", len(g), g[0], g[len(g)-1])
	}
	if g := potentialGrid([]float64{0}); g != nil {
		t.Errorf("vehicle alone: %v", g)
	}
}

// The figure's line is V(c) on the grid: at every grid point, the chord
// equation V = (Σ gᵢEᵢ + g_L·E_rev)/(Σ gᵢ + g_L) with g_L = N·γ·P_open(c)
// (FACTS §7 "Chord conductance"), written out here from the FACTS §7
// "Agonist applied" cell (rest gK 10, gNa 0.5, gCl 2 nS; 200 × 50 pS,
// Pmax 0.8, EC50 10 µM, nH 1.5, E_rev 0) with the Nernst potentials the
// response reports; at the requested concentrations it equals the
// response's points exactly.
func TestPotentialFigureLine(t *testing.T) {
	lo, h, pm, erev, thr := -5.0, 1.5, 0.8, 0.0, -60.0
	temp := 37.0
	req := &wire.PotentialRequest{ConcUnit: "nM", AgonistConc: floats(0, 300, 3000, 30000, 1e5),
		Hill:    &wire.HillIn{LogEC50: &lo, Hill: &h, PoMax: &pm},
		Channel: wire.ChannelIn{Count: 200, ConductancePS: 50, ReversalMV: &erev},
		Cell: wire.CellIn{TemperatureC: &temp, Ions: map[string]wire.IonIn{"k": {Out: 5, In: 140}, "na": {Out: 145, In: 12}, "cl": {Out: 110, In: 10}},
			RestingConductanceNS: map[string]float64{"k": 10, "na": 0.5, "cl": 2}},
		ThresholdMV: &thr}
	out, fig, err := PredictPotential(context.Background(), req, Budget{}, 0, true)
	if err != nil {
		t.Fatal(err)
	}
	e := out.NernstMV
	if math.Abs(e["k"]+89.06) > 0.01 || math.Abs(e["na"]-66.60) > 0.01 || math.Abs(e["cl"]+64.09) > 0.01 {
		t.Fatalf("Nernst %v, want FACTS §7's −89.06, +66.60, −64.09", e)
	}
	chord := func(c float64) float64 {
		po := 0.8 / (1 + math.Pow(1e-5/c, 1.5))
		gl := 200 * 50e-3 * po
		return (10*e["k"] + 0.5*e["na"] + 2*e["cl"] + gl*0) / (10 + 0.5 + 2 + gl)
	}
	if len(fig.LineConc) < potentialGridPoints || len(fig.Line) != len(fig.LineConc) {
		t.Fatalf("line of %d points on %d concentrations", len(fig.Line), len(fig.LineConc))
	}
	for i, c := range fig.LineConc {
		if want := chord(c); math.Abs(fig.Line[i]-want) > 1e-9 {
			t.Errorf("V(%g) = %.12f, chord equation %.12f", c, fig.Line[i], want)
		}
	}
	for _, p := range out.Points {
		if p.AgonistConc == 0 {
			continue
		}
		i := slices.Index(fig.LineConc, p.AgonistConc)
		if i < 0 || fig.Line[i] != p.VMV {
			t.Errorf("the line misses the point at %g M (index %d)", p.AgonistConc, i)
		}
	}
	if fig.HLineLabel != "threshold -60.0 mV" || fig.HLine != -60 || out.ThresholdCrossed == nil || fig.Mark != *out.ThresholdCrossed {
		t.Errorf("threshold line %q at %v, mark %v", fig.HLineLabel, fig.HLine, fig.Mark)
	}
	if !strings.HasPrefix(fig.Title, "agonist (EC50 10 µM, nH 1.5) on 200 × 50 pS channels") {
		t.Errorf("title %q", fig.Title)
	}
	// Without the figure nothing is drawn, and the JSON is the same.
	out2, fig2, err := PredictPotential(context.Background(), req, Budget{}, 0, false)
	if err != nil || fig2 != nil || len(out2.Points) != len(out.Points) || out2.Points[2] != out.Points[2] {
		t.Errorf("without the figure: %v %v", err, fig2)
	}
}

// The figure's grid is costed: a request the hard limit admits as JSON
// may be refused with the figure.
func TestPotentialFigureCost(t *testing.T) {
	lo, h, pm, erev := -5.0, 1.5, 0.8, 0.0
	req := &wire.PotentialRequest{ConcUnit: "M", AgonistConc: floats(1e-6, 1e-5),
		Hill:    &wire.HillIn{LogEC50: &lo, Hill: &h, PoMax: &pm},
		Channel: wire.ChannelIn{Count: 200, ConductancePS: 50, ReversalMV: &erev, MgMM: 1}, Cell: wire.CellIn{Preset: "neuron"}}
	json, fig := potentialWork(req, 0, false), potentialWork(req, 0, true)
	if fig <= json {
		t.Fatalf("work %v with the figure, %v without", fig, json)
	}
	b := Budget{Sync: json, Hard: json}
	if _, _, err := PredictPotential(context.Background(), req, b, 0, false); err != nil {
		t.Fatalf("JSON within the limit: %v", err)
	}
	if _, _, err := PredictPotential(context.Background(), req, b, 0, true); !errors.Is(err, ErrTooMuchWork) {
		t.Errorf("the figure over the limit: %v", err)
	}
}

// molarText picks the unit that keeps one to three digits before the
// point, rounding up into the next unit rather than printing 1e+03.
func TestMolarText(t *testing.T) {
	for c, want := range map[float64]string{3e-5: "30 µM", 1e-5: "10 µM", 9.9996e-4: "1 mM", 2.5e-10: "250 pM", 0.5: "500 mM", 3: "3 M", 5e-16: "0.5 fM"} {
		if got := molarText(c); got != want {
			t.Errorf("molarText(%g) = %q, want %q", c, got, want)
		}
	}
}
