package membrane

import "testing"

// The cost formula of membrane.Cost's doc comment.
func TestCostFormula(t *testing.T) {
	if got, want := float64(Cost(200, 1000, false)), 4*(200*1001+1561.0); got != want {
		t.Errorf("without Mg: %v, want %v", got, want)
	}
	evals := 4301*200 + 1000*(40*200+4001) + 40*1561 + 4001.0
	if got, want := float64(Cost(200, 1000, true)), 4*(200*1001+1561)+2*evals; got != want {
		t.Errorf("with Mg: %v, want %v", got, want)
	}
}
