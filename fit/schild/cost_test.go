package schild

import (
	"testing"

	"sluice/fit"
)

// The cost formula of schild.Cost's doc comment, on the benchmark's shape:
// 4 curves × 14 concentrations × 2 (gaddumData).
func TestCostFormula(t *testing.T) {
	cs := gaddumData(nil, 8, 1, 0, 2)
	var fits float64
	levels := 0
	for _, c := range cs {
		fits += float64(fit.Cost(len(c.Points), 14, 4, nil))
		levels += 14
	}
	for _, B := range []int{0, 1000} {
		want := fits + 6*float64(levels)*(2*50+2*float64(B)*10)
		if got := float64(Cost(cs, &Settings{Resamples: B})); got != want {
			t.Errorf("B = %d: Cost = %v, want %v", B, got, want)
		}
	}
	if Cost(cs, nil) != Cost(cs, &Settings{}) {
		t.Error("nil settings differ from zero settings")
	}
}
