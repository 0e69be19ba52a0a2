package potency

import (
	"fmt"
	"math"
)

// Pair is one compound measured in both runs of a replicate-experiment
// study: its log10 potency (log EC50 or log IC50) in run 1 and in run 2.
// ID is the caller's name for the compound, carried through untouched.
type Pair struct {
	ID         string
	Run1, Run2 float64
}

// Criterion names one acceptance criterion of a replicate study, in the
// form to store and show.
type Criterion string

// The acceptance criteria (FACTS §4; the Assay Guidance Manual's limits,
// typical textbook values).
const (
	// MSRBelow3: MSR < 3.
	MSRBelow3 Criterion = "msr_below_3"
	// RLContains1: the ratio limits contain 1 (no significant bias
	// between the runs).
	RLContains1 Criterion = "rl_contains_1"
	// LsAWithinLimits: both limits of agreement lie within 1/3 and 3.
	LsAWithinLimits Criterion = "lsa_within_third_to_3"
)

// Acceptance limits of a replicate study.
const (
	MaxStudyMSR = 3.0     // MSR must be below this
	LsALow      = 1.0 / 3 // LsA must lie within [LsALow, LsAHigh]
	LsAHigh     = 3.0
)

// Study is the result of a replicate-experiment study. With
// dᵢ = log potency in run 1 − log potency in run 2 for the n compounds,
// MD = mean(d) and s_d = SD(d) (n − 1), following Eastwood et al. 2006
// (J Biomol Screen 11:253) and FACTS §4:
//
//	MR  = 10^MD                     mean ratio, run 1 / run 2
//	MSR = 10^(2·s_d)                minimum significant ratio
//	RL  = 10^(MD ± 2·s_d/√n)        ratio limits: the interval of MR
//	LsA = 10^(MD ± 2·s_d) = MR ÷/× MSR   limits of agreement
//
// The factor 2 approximates the normal 97.5 % point, as the published
// method does; it is not a t quantile.
type Study struct {
	N       int
	MD, SD  float64 // mean and SD of the log differences
	MR, MSR float64
	RL, LsA Interval
	// Pass is true when no criterion failed.
	Pass bool
	// Failed lists the failed criteria in the order MSRBelow3,
	// RLContains1, LsAWithinLimits; empty when Pass.
	Failed []Criterion
}

// Replicate evaluates a replicate-experiment study of paired log10
// potencies (PairRuns builds them from two runs' curves). It needs at least
// two pairs with finite values (the error names
// "pairs" or "pairs[i].run1"/"run2").
func Replicate(pairs []Pair) (*Study, error) {
	if len(pairs) < 2 {
		return nil, fieldErr("pairs", "need at least 2 compounds measured in both runs, got %d", len(pairs))
	}
	d := make([]float64, len(pairs))
	for i, p := range pairs {
		if !finite(p.Run1) {
			return nil, fieldErr(fmt.Sprintf("pairs[%d].run1", i), "must be finite, got %v", p.Run1)
		}
		if !finite(p.Run2) {
			return nil, fieldErr(fmt.Sprintf("pairs[%d].run2", i), "must be finite, got %v", p.Run2)
		}
		d[i] = p.Run1 - p.Run2
	}
	n := len(d)
	s := &Study{N: n, MD: mean(d)}
	s.SD = sd(d, s.MD)
	s.MR = math.Pow(10, s.MD)
	s.MSR = math.Pow(10, 2*s.SD)
	half := 2 * s.SD / math.Sqrt(float64(n))
	s.RL = Interval{s.MD - half, s.MD + half}.Pow10()
	s.LsA = LimitsOfAgreement(s.MR, s.MSR)
	if !(s.MSR < MaxStudyMSR) {
		s.Failed = append(s.Failed, MSRBelow3)
	}
	if !s.RL.Contains(1) {
		s.Failed = append(s.Failed, RLContains1)
	}
	if !(s.LsA.Lo >= LsALow && s.LsA.Hi <= LsAHigh) {
		s.Failed = append(s.Failed, LsAWithinLimits)
	}
	s.Pass = len(s.Failed) == 0
	return s, nil
}

// LimitsOfAgreement is MR ÷/× MSR, the interval [MR/MSR, MR·MSR] in which
// most single-compound ratios of the two runs fall: MR 0.80 with MSR 3.54
// gives (0.2260, 2.8320).
func LimitsOfAgreement(mr, msr float64) Interval {
	return Interval{mr / msr, mr * msr}
}
