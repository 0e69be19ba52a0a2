package potency_test

import (
	"fmt"
	"time"

	"sluice/fit/potency"
)

// ExampleSummarize summarises an invented reference compound's history: six
// usable runs, one rejected and one beyond the tested range.
func ExampleSummarize() {
	day := func(d int) time.Time { return time.Date(2026, 3, d, 0, 0, 0, 0, time.UTC) }
	run := func(log float64, d int) potency.Run {
		return potency.Run{LogEC50: log, Activity: potency.Active, Qualifier: potency.Equal, MeasuredAt: day(d)}
	}
	rejected := run(-5.2, 4)
	rejected.Rejected = true
	runs := []potency.Run{
		run(-7.02, 1), run(-6.91, 2), run(-7.10, 3), rejected, run(-6.98, 5),
		{LogEC50: -4.5, Activity: potency.Active, Qualifier: potency.Greater, MeasuredAt: day(6)},
		run(-7.05, 7), run(-6.95, 8),
	}
	h, err := potency.Summarize(runs, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("n %d, pEC50 %.2f, GM %.1f nM (95%% CI %.1f–%.1f nM)\n",
		h.N, h.PEC50Mean, h.GeoMeanEC50*1e9, h.GeoMeanCI.Lo*1e9, h.GeoMeanCI.Hi*1e9)
	fmt.Printf("MSR %.2f over the last %d runs\n", h.MSR, h.MSRRuns)
	fmt.Printf("excluded: %d rejected, %d qualified\n", h.Excluded.Rejected, h.Excluded.Qualified)
	// Output:
	// n 6, pEC50 7.00, GM 99.6 nM (95% CI 84.3–117.7 nM)
	// MSR 1.57 over the last 6 runs
	// excluded: 1 rejected, 1 qualified
}

// ExampleReplicate runs the replicate-experiment study of FACTS §4.
func ExampleReplicate() {
	run1 := []float64{-6.10, -7.32, -5.85, -8.01, -6.72, -7.90, -5.40, -6.95, -7.45, -8.30}
	run2 := []float64{-6.02, -7.45, -5.70, -8.12, -6.60, -7.70, -5.52, -6.88, -7.30, -8.41}
	var pairs []potency.Pair
	for i := range run1 {
		pairs = append(pairs, potency.Pair{Run1: run1[i], Run2: run2[i]})
	}
	s, err := potency.Replicate(pairs)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("n %d, MR %.3f, MSR %.3f\n", s.N, s.MR, s.MSR)
	fmt.Printf("RL %.3f–%.3f, LsA %.3f–%.3f, pass %v\n", s.RL.Lo, s.RL.Hi, s.LsA.Lo, s.LsA.Hi, s.Pass)
	// Output:
	// n 10, MR 0.933, MSR 1.838
	// RL 0.770–1.131, LsA 0.508–1.715, pass true
}

// ExampleMeanLog averages three potencies as a geometric mean (FACTS §8).
func ExampleMeanLog() {
	m, err := potency.MeanLog([]float64{-6, -5.69897, -5.39794}, 0) // 1, 2, 4 µM
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("GM %.3f µM, mean pEC50 %.4f, 95%% CI %.3f–%.3f µM\n", m.GeoMean()*1e6, m.PMean(), m.GeoCI().Lo*1e6, m.GeoCI().Hi*1e6)
	// Output:
	// GM 2.000 µM, mean pEC50 5.6990, 95% CI 0.357–11.190 µM
}
