package drift

import (
	"math"
	"math/rand/v2"
	"testing"
)

// arlRuns is the number of simulated run lengths behind each average run
// length (ARL). An in-control run length is close to geometric, so its SD
// is close to its mean and the SE of an average of n runs is ≈ ARL/√n.
// For the ±2 % tolerance to be at least 4 SE (a spurious failure below 1 in
// 10 000 for a correct chart, before fixing the seed):
//
//	0.02·ARL ≥ 4·ARL/√n   ⇔   n ≥ (4/0.02)² = 40 000.
//
// At the in-control ARLs below that is about 60 million simulated points,
// a few seconds, so the test runs only without -short.
const arlRuns = 40_000

// arl simulates the average run length of the charts under set until a
// point violates rule, on N(shift, 1) values against Baseline{0, 1}: the
// package's own evaluator, one point at a time. The seed fixes the result.
func arl(t *testing.T, set Settings, rule Rule, shift float64, seed uint64) float64 {
	t.Helper()
	s, err := set.Resolve()
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	total := 0
	for range arlRuns {
		e := newEvaluator(Baseline{Mean: 0, SD: 1}, s)
		for n := 1; ; n++ {
			if e.step(shift+rng.NormFloat64(), true).Violations.Has(rule) {
				total += n
				break
			}
		}
	}
	return float64(total) / arlRuns
}

// The ARLs of FACTS §5 ([DER], Markov-chain values; the CUSUM ones agree
// with Montgomery's tables, typical textbook values), each within ±2 % (see
// arlRuns). The EWMA runs with the chart's time-varying limits, which
// signal slightly earlier than the asymptotic limits the Markov-chain
// figures assume; the difference is within the tolerance.
func TestAverageRunLengths(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation of about 60 million points")
	}
	for _, c := range []struct {
		name  string
		set   Settings
		rule  Rule
		shift float64
		want  float64
	}{
		{"EWMA λ 0.2 L 3", Settings{EWMALambda: 0.2, EWMAL: 3, Rules: Set(RuleEWMA)}, RuleEWMA, 0, 560},
		{"EWMA λ 0.2 L 2.962", Settings{EWMALambda: 0.2, EWMAL: 2.962, Rules: Set(RuleEWMA)}, RuleEWMA, 0, 500},
		{"CUSUM k 0.5 h 5", Settings{CUSUMK: 0.5, CUSUMH: 5, Rules: Set(RuleCUSUM)}, RuleCUSUM, 0, 465},
		{"CUSUM k 0.5 h 4", Settings{CUSUMK: 0.5, CUSUMH: 4, Rules: Set(RuleCUSUM)}, RuleCUSUM, 0, 168},
		// Out of control, a 1 SD shift: run lengths vary less than their
		// mean, so the same n is more than enough.
		{"CUSUM k 0.5 h 5, 1 SD shift", Settings{CUSUMK: 0.5, CUSUMH: 5, Rules: Set(RuleCUSUM)}, RuleCUSUM, 1, 10.4},
		{"CUSUM k 0.5 h 4, 1 SD shift", Settings{CUSUMK: 0.5, CUSUMH: 4, Rules: Set(RuleCUSUM)}, RuleCUSUM, 1, 8.38},
		// 1-3s alone: P(|z| > 3) = 0.0027, ARL 1/0.0027 = 370.4.
		{"1-3s", Settings{Rules: Set(Rule13s)}, Rule13s, 0, 370.4},
	} {
		got := arl(t, c.set, c.rule, c.shift, 1)
		if math.Abs(got/c.want-1) > 0.02 {
			t.Errorf("%s: ARL %.1f, want %.1f ± 2%%", c.name, got, c.want)
		} else {
			t.Logf("%s: ARL %.1f (reference %.1f)", c.name, got, c.want)
		}
	}
}
