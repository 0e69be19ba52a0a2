package potency

import (
	"errors"
	"math"
	"slices"
	"testing"
)

// Compounds common to both runs are paired in ID order; duplicates within a
// run are averaged on the log scale; a compound of one run only is left out.
func TestPairRuns(t *testing.T) {
	run1 := []Measurement{{"c", -7}, {"a", -6}, {"b", -8}, {"a", -6.4}, {"only1", -5}}
	run2 := []Measurement{{"b", -8.1}, {"a", -6.1}, {"c", -7.2}, {"only2", -9}}
	got, err := PairRuns(run1, run2)
	if err != nil {
		t.Fatal(err)
	}
	want := []Pair{{"a", -6.2, -6.1}, {"b", -8, -8.1}, {"c", -7, -7.2}}
	if !slices.EqualFunc(got, want, func(p, q Pair) bool {
		return p.ID == q.ID && math.Abs(p.Run1-q.Run1) < 1e-12 && math.Abs(p.Run2-q.Run2) < 1e-12
	}) {
		t.Errorf("pairs %v, want %v", got, want)
	}
	_, err = PairRuns(run1, []Measurement{{"a", -6}, {"b", math.NaN()}})
	var fe *FieldError
	if !errors.As(err, &fe) || fe.Field != "run2[1].log_ec50" {
		t.Errorf("want an error naming run2[1].log_ec50, got %v", err)
	}
}
