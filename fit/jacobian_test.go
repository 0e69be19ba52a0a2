package fit

import (
	"math"
	"testing"
)

// TestJacobiansFiniteDifference checks every model's analytic gradient
// against central differences, ∂f/∂θⱼ ≈ (f(θ + hⱼ) − f(θ − hⱼ))/2hⱼ, whose
// error is O(h²) (common practice; cf. gonum optimize/functions).
func TestJacobiansFiniteDifference(t *testing.T) {
	cases := []struct {
		m     Model
		theta []float64
	}{
		{Hill, []float64{2, 95, -6.5, 1.3}},
		{Hill, []float64{100, 5, -7, -0.8}},
		{Hill5, []float64{1, 98, -6.2, 1.1, 0.4}},
		{Hill5, []float64{1, 98, -6.2, -2, 3}},
		{Bell, []float64{0.5, 110, -6, 1.4, -4.2, 0.9}},
	}
	for _, c := range cases {
		cm := c.m.Spec()
		np := len(c.theta)
		g := make([]float64, np)
		for x := -9.0; x <= -3; x += 0.37 {
			cm.value(c.theta, x, g)
			for j := 0; j < np; j++ {
				h := 1e-5 * math.Max(1, math.Abs(c.theta[j]))
				tp := append([]float64(nil), c.theta...)
				tm := append([]float64(nil), c.theta...)
				tp[j] += h
				tm[j] -= h
				fd := (cm.value(tp, x, nil) - cm.value(tm, x, nil)) / (2 * h)
				if d := math.Abs(fd - g[j]); d > 1e-6*math.Max(1, math.Abs(fd)) {
					t.Errorf("%s θ=%v x=%.2f ∂/∂%s: analytic %.9g, finite difference %.9g",
						c.m, c.theta, x, cm.names()[j], g[j], fd)
				}
			}
		}
	}
}
