package plate

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.7f, want %.7f ± %g", what, got, want, tol)
	}
}

// FACTS §4 check values (Zhang, Chung & Oldenburg 1999; AGM signal window
// [M]; CV with the n − 1 SD), derived there.
func TestQCFACTS(t *testing.T) {
	near(t, "Z′", ZPrime(100, 5, 10, 3), 0.733333, 1e-6)
	near(t, "Z", ZPrime(95, 8, 10, 3), 0.611765, 1e-6)
	near(t, "SW n=1", SignalWindow(100, 5, 10, 3, 1), 13.2, 1e-6)
	near(t, "SW n=2", SignalWindow(100, 5, 10, 3, 2), 20.655844, 1e-6)
	near(t, "CV", CV([]float64{98, 101, 99, 103, 97, 100, 102}), 2.1602, 1e-4)
}

// Well names round-trip on all three formats, padded and unpadded, and the
// outer ring holds 36, 76 and 156 wells (FACTS §4 [C]).
func TestWellNames(t *testing.T) {
	for _, c := range []struct {
		f    Format
		edge int
		last string
	}{{Plate96, 36, "H12"}, {Plate384, 76, "P24"}, {Plate1536, 156, "AF48"}} {
		edge := 0
		for r := 0; r < c.f.Rows; r++ {
			for col := 0; col < c.f.Cols; col++ {
				w := Well{r, col}
				name := c.f.Name(w)
				back, err := c.f.ParseWell(name)
				if err != nil || back != w {
					t.Fatalf("%d: %s → %v %v", c.f.Wells, name, back, err)
				}
				unpadded := strings.Replace(name, "0", "", 1)
				if col+1 < 10 {
					if back, err := c.f.ParseWell(strings.ToLower(unpadded)); err != nil || back != w {
						t.Fatalf("%s (%s) → %v %v", unpadded, name, back, err)
					}
				}
				if c.f.Edge(w) {
					edge++
				}
			}
		}
		if edge != c.edge {
			t.Errorf("%d-well outer ring: %d, want %d", c.f.Wells, edge, c.edge)
		}
		if n := c.f.Name(Well{c.f.Rows - 1, c.f.Cols - 1}); n != c.last {
			t.Errorf("last well %s, want %s", n, c.last)
		}
	}
	for _, bad := range []string{"Q1", "A25", "A0", "1A", "", "AG1", "BA1", "A-1", "A+1"} {
		if _, err := Plate384.ParseWell(bad); err == nil {
			t.Errorf("%q accepted on a 384-well plate", bad)
		}
	}
	if _, err := Plate1536.ParseWell("AF48"); err != nil {
		t.Error(err)
	}
	if _, err := Plate96.ParseWell("I1"); err == nil {
		t.Error("I1 accepted on a 96-well plate")
	}
}

// invented control layout: columns 1–2 max, 23–24 min on a 384-well plate.
func controlPlate(rng *rand.Rand, edgeBoost float64) []Measured {
	var ws []Measured
	for r := 0; r < 16; r++ {
		for c := 0; c < 24; c++ {
			w := Measured{Well: Well{r, c}, Role: Sample, Value: 50 + 5*rng.NormFloat64()}
			switch {
			case c < 2:
				w.Role, w.Value = MaxControl, 1000+30*rng.NormFloat64()
			case c >= 22:
				w.Role, w.Value = MinControl, 100+10*rng.NormFloat64()
			}
			if Plate384.Edge(w.Well) && w.Role != Sample {
				w.Value += edgeBoost
			}
			ws = append(ws, w)
		}
	}
	return ws
}

func TestAssess(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	q, err := Assess(Plate384, controlPlate(rng, 0), Thresholds{})
	if err != nil {
		t.Fatal(err)
	}
	// Z′ of means 1000/100 with SDs 30/10: 1 − 3·40/900 = 0.8667 in
	// expectation; sampled, within ±0.05.
	if !q.Pass || math.Abs(q.ZPrime-0.8667) > 0.05 || len(q.Reasons) != 0 {
		t.Errorf("clean plate: %+v", q)
	}
	// Controls on the outer ring read 30 % of the window high: an edge effect.
	q, _ = Assess(Plate384, controlPlate(rng, 270), Thresholds{})
	if q.Pass || !strings.Contains(strings.Join(q.Reasons, ";"), "edge effect") {
		t.Errorf("edge plate passed: %+v", q)
	}
	// A noisy max control fails on Z′ and CV.
	ws := controlPlate(rng, 0)
	for i := range ws {
		if ws[i].Role == MaxControl {
			ws[i].Value = 1000 + 300*rng.NormFloat64()
		}
	}
	q, _ = Assess(Plate384, ws, Thresholds{})
	r := strings.Join(q.Reasons, ";")
	if q.Pass || !strings.Contains(r, "Z′") || !strings.Contains(r, "CV of max_control") {
		t.Errorf("noisy plate: %+v", q)
	}
	if _, err := Assess(Plate384, ws[:1], Thresholds{}); err == nil {
		t.Error("no controls accepted")
	}
}

func TestNormaliseAndCurves(t *testing.T) {
	near(t, "agonist", Agonist.Normalise(550, 1000, 100), 50, 1e-12)
	near(t, "antagonist", Antagonist.Normalise(325, 1000, 100), 75, 1e-12)
	ws := []PlateWell{
		{Well: Well{0, 0}, Role: Sample, CompoundID: "b", Conc: 1e-6, Value: 550},
		{Well: Well{0, 1}, Role: Sample, CompoundID: "a", Conc: 1e-6, Value: 1000},
		{Well: Well{0, 2}, Role: Vehicle, Value: 100},
		{Well: Well{0, 3}, Role: Vehicle, CompoundID: "a", Value: 190},
		{Well: Well{0, 4}, Role: Sample, CompoundID: "a", Conc: 1e-6, Value: 1000, AntagonistID: "x", AntagonistConc: 1e-8},
		{Well: Well{0, 5}, Role: MaxControl, Value: 1000},
	}
	cs := Curves(ws, Agonist, 1000, 100)
	if len(cs) != 3 || cs[0].Key != "a" || cs[1].Key != "a@x:1e-08" || cs[2].Key != "b" {
		t.Fatalf("curves %+v", cs)
	}
	if p := cs[0].Curve.Points; len(p) != 3 || p[0].Response != 100 || p[1].Conc != 0 || p[1].Response != 10 || p[2].Response != 0 {
		t.Errorf("curve a: %+v", p)
	}
	if len(cs[2].Curve.Points) != 2 {
		t.Errorf("curve b gets only the shared vehicle: %+v", cs[2].Curve.Points)
	}
}
