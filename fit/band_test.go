package fit

import (
	"math"
	"testing"
)

// The band is zero-width where the curve does not depend on the uncertain
// parameters, and at log_ec50 with only log_ec50 uncertain it is
// ±t·(top − bottom)·(h·ln10/4)·SE (the Hill slope at the midpoint, derived
// from the Hill equation).
func TestBand(t *testing.T) {
	theta := []float64{0, 100, -6, 1}
	cov := make([]float64, 16)
	se := 0.1
	cov[iLogEC*4+iLogEC] = se * se
	y, lo, hi := Band(Hill, theta, cov, 1_000_000, 0.95, []float64{0, 1e-6})
	if y[0] != 0 || lo[0] != 0 || hi[0] != 0 {
		t.Errorf("vehicle: %v [%v, %v], want 0 exactly", y[0], lo[0], hi[0])
	}
	want := 1.959964 * 100 * math.Ln10 / 4 * se
	if math.Abs((hi[1]-y[1])-want) > 1e-4 || math.Abs((y[1]-lo[1])-want) > 1e-4 {
		t.Errorf("at EC50: [%v, %v] around %v, half-width want %v", lo[1], hi[1], y[1], want)
	}
}
