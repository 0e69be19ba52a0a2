package potency

import (
	"fmt"
	"sort"
)

// Measurement is one usable log10 potency of a compound in one run of a
// replicate study (a curve of one of the run's plates).
type Measurement struct {
	ID      string // the compound
	LogEC50 float64
}

// PairRuns pairs the compounds measured in both runs of a replicate study,
// the input of Replicate. A compound measured more than once in a run
// enters with its mean log potency (the log of its geometric mean); a
// compound found in one run only is left out. The pairs are in ID order.
// Values must be finite (the error names "run1[i].log_ec50" or
// "run2[i].log_ec50").
func PairRuns(run1, run2 []Measurement) ([]Pair, error) {
	m1, err := meansByID("run1", run1)
	if err != nil {
		return nil, err
	}
	m2, err := meansByID("run2", run2)
	if err != nil {
		return nil, err
	}
	var pairs []Pair
	for id, x := range m1 {
		if y, ok := m2[id]; ok {
			pairs = append(pairs, Pair{ID: id, Run1: x, Run2: y})
		}
	}
	sort.Slice(pairs, func(a, b int) bool { return pairs[a].ID < pairs[b].ID })
	return pairs, nil
}

func meansByID(run string, ms []Measurement) (map[string]float64, error) {
	sum := make(map[string]float64, len(ms))
	n := make(map[string]int, len(ms))
	for i, m := range ms {
		if !finite(m.LogEC50) {
			return nil, fieldErr(fmt.Sprintf("%s[%d].log_ec50", run, i), "must be finite, got %v", m.LogEC50)
		}
		sum[m.ID] += m.LogEC50
		n[m.ID]++
	}
	for id := range sum {
		sum[id] /= float64(n[id])
	}
	return sum, nil
}
