package fit

import (
	"math"
	"math/rand/v2"
	"testing"
)

// modelCurve simulates 10 concentrations (1 nM to 31.6 µM, half-log steps)
// in triplicate of any model, with Gaussian noise of SD sigma.
func modelCurve(rng *rand.Rand, m Model, truth []float64, sigma float64) Curve {
	var c Curve
	for i := 0; i < 10; i++ {
		conc := 1e-9 * math.Pow(10, 0.5*float64(i))
		for r := 0; r < 3; r++ {
			c.Points = append(c.Points, Point{Conc: conc, Response: m.Value(truth, conc) + sigma*rng.NormFloat64()})
		}
	}
	return c
}

// referenceRSS is the smallest RSS of the model on the curve over a grid
// of many starts (every plateau order, potencies across the tested range
// and beyond, slopes of both signs and three sizes, and for Hill5 five
// asymmetries; for Bell the block placed above the rise), each solved with
// the solver's defaults, kept when the model admits it (Bell: a peak,
// activation before block; bellAdmissible): a reference for the global
// optimum of the family that does not share the fitter's search.
func referenceRSS(t *testing.T, m Model, c Curve) float64 {
	t.Helper()
	set, err := (&Settings{Model: m}).resolve()
	if err != nil {
		t.Fatal(err)
	}
	d := newDesign(c.Points)
	sv := newSolver(set, d, false)
	lo, hi, _ := d.finiteRange()
	ymin, ymax := math.Inf(1), math.Inf(-1)
	for _, y := range d.ybar {
		ymin, ymax = math.Min(ymin, y), math.Max(ymax, y)
	}
	span := ymax - ymin
	plateaus := [][2]float64{{ymin, ymax}, {ymax, ymin}, {ymin - 0.3*span, ymax + 0.3*span}, {ymax + 0.3*span, ymin - 0.3*span}}
	Ls := []float64{lo - 1, lo + 0.1*(hi-lo), lo + 0.35*(hi-lo), lo + 0.65*(hi-lo), lo + 0.9*(hi-lo), hi + 1}
	best := math.Inf(1)
	solve := func(st []float64) {
		clampStarts(set, d, [][]float64{st})
		if sv.solve(d.ybar, d.w, st).Converged() && set.curve.admits(sv.res.X) && sv.res.RSS < best {
			best = sv.res.RSS
		}
	}
	for _, pl := range plateaus {
		for _, L := range Ls {
			switch m {
			case Hill5:
				for _, h := range []float64{-3, -1, -0.4, 0.4, 1, 3} {
					for _, s := range []float64{0.1, 0.3, 1, 3, 10} {
						solve([]float64{pl[0], pl[1], L, h, s})
					}
				}
			case Bell:
				if pl[0] > pl[1] {
					continue // Bell's top lies above its bottom
				}
				for _, gap := range []float64{0.5, 1.5, 3, 5} {
					for _, h := range []float64{0.5, 1, 3} {
						for _, hb := range []float64{0.5, 1, 3} {
							solve([]float64{pl[0], pl[1] + 0.5*span, L, h, L + gap, hb})
						}
					}
				}
			}
		}
	}
	return best
}

// Hill5 and Bell reach the best optimum of their family: on simulated
// curves the fitter's RSS is never worse than that of a many-start
// reference by more than 1e-8 relative, and never worse than the Hill fit
// it nests. The curves are asymmetric, rising and falling, full and
// partial (Hill5), and bells with peaks in and at the edge of the tested
// range (Bell).
func TestSearchReachesGlobalOptimum(t *testing.T) {
	if testing.Short() {
		t.Skip("many-start reference")
	}
	const curves = 100
	rng := rand.New(rand.NewPCG(2026, 12))
	for _, m := range []Model{Hill5, Bell} {
		worse, worst := 0, 0.0
		for i := 0; i < curves; i++ {
			var truth []float64
			switch m {
			case Hill5:
				b, top := 5*rng.NormFloat64(), 30+70*rng.Float64()
				h := 0.6 + 2*rng.Float64()
				if rng.IntN(2) == 0 {
					h = -h
				}
				s := math.Exp(2.4 * (rng.Float64() - 0.5)) // 0.3 to 3.3
				truth = []float64{b, top, -8.5 + 3.5*rng.Float64(), h, s}
			case Bell:
				L := -8.5 + 2.5*rng.Float64()
				truth = []float64{5 * rng.NormFloat64(), 60 + 60*rng.Float64(), L, 0.7 + 1.5*rng.Float64(),
					L + 0.5 + 2.5*rng.Float64(), 0.7 + 1.5*rng.Float64()}
			}
			c := modelCurve(rng, m, truth, 2+6*rng.Float64())
			r, err := Fit(c, &Settings{Model: m})
			if err != nil {
				t.Fatal(err)
			}
			ref := referenceRSS(t, m, c)
			rel := (r.RSS - r.design.pureSS - ref) / ref
			// A status other than converged is allowed at the
			// reference's RSS: Bell with its block pushed past the tested
			// range is Hill, and rank-deficient there.
			if rel > 1e-8 {
				worse++
				t.Errorf("%s curve %d (truth %.3g): status %s, RSS %.10g, reference %.10g (%.2g relative worse)",
					m, i, truth, r.Status, r.RSS-r.design.pureSS, ref, rel)
			}
			worst = math.Max(worst, rel)
			if cmp := r.Comparison; cmp == nil || r.RSS > cmp.SimplerRSS*(1+1e-10) {
				t.Errorf("%s curve %d: RSS %.10g, above the nested Hill fit's (%+v)", m, i, r.RSS, cmp)
			}
		}
		t.Logf("%s: %d curves, %d worse than the reference by more than 1e-8; worst relative difference %.2g", m, curves, worse, worst)
	}
}
