package cost

import "testing"

func TestSeconds(t *testing.T) {
	// 25 million units at 40 ns each are one second.
	if got := Work(25e6).Seconds(); got < 1-1e-12 || got > 1+1e-12 {
		t.Errorf("Seconds = %v, want 1", got)
	}
}
