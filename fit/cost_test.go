package fit

import (
	"math/rand/v2"
	"testing"

	"sluice/fit/boot"
)

// The cost formula, term by term (fit.Cost's doc comment).
func TestCostFormula(t *testing.T) {
	for _, c := range []struct {
		name                   string
		points, levels, params int
		bs                     *BootSettings
		want                   float64
	}{
		{"fit only", 30, 10, 4, nil, 10 * 4 * 250},
		{"B = 1000 percentile", 30, 10, 4, &BootSettings{Interval: IntervalPercentile}, 10 * 4 * (250 + 1000*8)},
		{"B = 1000 BCa", 30, 10, 4, &BootSettings{Resamples: 1000}, 10 * 4 * (250 + 1000*8 + 30*8)},
		{"hill5", 30, 10, 5, &BootSettings{Resamples: 500, Interval: IntervalPercentile}, 10 * 5 * (600 + 500*16)},
		{"bell", 24, 8, 6, &BootSettings{Resamples: 500, Interval: IntervalPercentile}, 8 * 6 * (1600 + 500*32)},
	} {
		if got := float64(Cost(c.points, c.levels, c.params, c.bs)); got != c.want {
			t.Errorf("%s: Cost = %v, want %v", c.name, got, c.want)
		}
	}
	curves := []Curve{{Points: []Point{{Conc: 1}, {Conc: 1}, {Conc: 2}}}, {Points: []Point{{Conc: 1}, {Conc: 3}}}}
	if got, want := CostOf(curves, 4, nil), Cost(3, 2, 4, nil)+Cost(2, 2, 4, nil); got != want {
		t.Errorf("CostOf = %v, want %v", got, want)
	}
}

// The evaluation counts behind Cost hold from above on simulated curves of
// every model: the first fit's evaluations over all its starts, and the
// mean evaluations of a warm-started bootstrap refit. A solver change that
// makes fits dearer fails here, and the constants must follow.
func TestCostCountsBoundMeasuredEvaluations(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, m := range Builtin().Names() {
		var fitEvals, refitEvals, curves, refits int
		var params int
		for trial := 0; trial < 25; trial++ {
			c := simulatedCurve(rng, []float64{0, 100, -7, 1}, 2+8*rng.Float64())
			set, err := (&Settings{Model: m}).resolve()
			if err != nil {
				t.Fatal(err)
			}
			d := newDesign(c.Points)
			params = len(set.curve.names())
			// The fit's own count: every start it tried, and for a
			// model that searches, the nested Hill fit.
			r := fitDesign("", set, d)
			fitEvals += r.evaluations
			curves++
			if !r.Converged() {
				continue
			}
			theta := r.Estimates()
			fitted := make([]float64, len(d.x))
			for l, x := range d.x {
				fitted[l] = set.curve.value(theta, x, nil)
			}
			resid := make([]float64, d.n)
			for i := range resid {
				resid[i] = d.y[i] - fitted[d.level[i]]
			}
			bsv := newSolver(set, d, true)
			st := boot.NewStream()
			for b := 0; b < 100; b++ {
				st.Reset(1, b)
				d.residualResample(st, fitted, resid, bsv.ybuf, bsv.wbuf)
				bsv.solve(bsv.ybuf, bsv.wbuf, theta)
				refitEvals += bsv.res.Evaluations
				refits++
			}
		}
		levels := 10
		if got, bound := float64(fitEvals)/float64(curves), float64(Cost(30, levels, params, nil))/float64(levels*params); got > bound {
			t.Errorf("%s: first fits take %.1f evaluations on average, the cost model allows %v", m, got, bound)
		}
		perRefit := (float64(Cost(30, levels, params, &BootSettings{Resamples: 1, Interval: IntervalPercentile})) - float64(Cost(30, levels, params, nil))) / float64(levels*params)
		if got := float64(refitEvals) / float64(refits); got > perRefit {
			t.Errorf("%s: refits take %.1f evaluations on average, the cost model allows %v", m, got, perRefit)
		}
	}
}
