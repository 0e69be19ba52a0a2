package drift

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// randomSeries is a seeded series with a drift in its second half and
// plates of one to three controls, so that every rule has a chance to fire.
func randomSeries(seed uint64, n int) []Point {
	rng := rand.New(rand.NewPCG(seed, 7))
	pts := make([]Point, n)
	plate, left := 0, 0
	for i := range pts {
		if left == 0 {
			plate++
			left = 1 + rng.IntN(3)
		}
		left--
		shift := 0.0
		if i > n/2 {
			shift = 0.02 * float64(i-n/2)
		}
		pts[i] = Point{Value: 100 + 5*(shift+1.3*rng.NormFloat64()), Group: fmt.Sprint("plate-", plate)}
	}
	return pts
}

// Appending points never changes the results of earlier ones (what the
// package documentation promises callers that re-evaluate a whole series).
func TestPrefixStable(t *testing.T) {
	base := Baseline{Mean: 100, SD: 5}
	for _, mode := range []Mode{ModeWarning, ModeTrigger} {
		pts := randomSeries(3, 200)
		full, err := Evaluate(pts, base, &Settings{Mode: mode})
		if err != nil {
			t.Fatal(err)
		}
		fired := RuleSet(0)
		for k := 1; k <= len(pts); k++ {
			part, err := Evaluate(pts[:k], base, &Settings{Mode: mode})
			if err != nil {
				t.Fatal(err)
			}
			for i := range part.Points {
				if part.Points[i] != full.Points[i] {
					t.Fatalf("%s mode: point %d differs when the series ends at %d", mode, i, k)
				}
			}
			fired |= full.Points[k-1].Violations
		}
		if mode == ModeWarning && fired != AllRules {
			t.Errorf("the test series fired only %v; it should exercise every rule", fired.Strings())
		}
	}
}

// The rules read standardised values: a change of units (x → a·x + b with
// the baseline changed alike) changes no violation, z or CUSUM.
func TestUnitInvariance(t *testing.T) {
	pts := randomSeries(5, 300)
	base := Baseline{Mean: 100, SD: 5}
	a, b := 1e-3, -7.0
	scaled := make([]Point, len(pts))
	for i, p := range pts {
		scaled[i] = Point{Value: a*p.Value + b, Group: p.Group}
	}
	c1, err := Evaluate(pts, base, nil)
	if err != nil {
		t.Fatal(err)
	}
	c2, err := Evaluate(scaled, Baseline{Mean: a*base.Mean + b, SD: a * base.SD}, nil)
	if err != nil {
		t.Fatal(err)
	}
	for i := range pts {
		p, q := c1.Points[i], c2.Points[i]
		if p.Violations != q.Violations {
			t.Errorf("point %d: %v in one unit, %v in the other", i, p.Violations.Strings(), q.Violations.Strings())
		}
		near(t, "z", q.Z, p.Z, 1e-9)
		near(t, "C+", q.CUSUMHi, p.CUSUMHi, 1e-9)
		near(t, "EWMA", q.EWMA, a*p.EWMA+b, 1e-9)
	}
}
