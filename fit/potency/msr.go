package potency

import "math"

// MinMSRRuns is the fewest runs a production MSR is computed from; with
// fewer, ProductionMSR is NaN (reported as null).
const MinMSRRuns = 3

// twoRoot2 is 2√2: two SDs of the difference of two runs, each with SD s.
var twoRoot2 = 2 * math.Sqrt2

// MSR is the production minimum significant ratio for a between-run SD s
// of log10 potency (Eastwood et al. 2006, J Biomol Screen 11:253; FACTS §4):
//
//	MSR = 10^(2·√2·s)
//
// s 0.10, 0.15, 0.20 give 1.917974, 2.656220, 3.678624.
func MSR(s float64) float64 { return math.Pow(10, twoRoot2*s) }

// SDForMSR inverts MSR: the between-run SD of log10 potency at which the
// MSR equals msr (> 0),
//
//	s = log10(msr)/(2·√2);
//
// an MSR of 3, the usual acceptance limit, is reached at s = 0.168688.
func SDForMSR(msr float64) float64 { return math.Log10(msr) / twoRoot2 }

// ProductionMSR is MSR(s) with s the sample SD (n − 1) of the log10
// potencies of one compound's runs; NaN with fewer than MinMSRRuns values.
// The values must be finite.
func ProductionMSR(logs []float64) float64 {
	if len(logs) < MinMSRRuns {
		return math.NaN()
	}
	return MSR(sd(logs, mean(logs)))
}
