package fit

import (
	"math"
	"testing"
)

// The Hill equation has a twin for every curve, (bottom, top, hill) ↔
// (top, bottom, −hill). A fit that lands on the twin is reported as
// bottom < top with the sign of hill giving the direction, its covariance
// mapped with it.
func TestCanonicalHill(t *testing.T) {
	var c Curve
	for k := 0; k < 10; k++ {
		conc := 1e-9 * math.Pow(10, 0.5*float64(k))
		y := Hill.Value([]float64{2, 98, -6.5, 1.1}, conc) + []float64{1, -2, 0.5, 1.5, -1, 0, 2, -0.5, 1, -1.5}[k]
		c.Points = append(c.Points, Point{Conc: conc, Response: y})
	}
	d := newDesign(c.Points)
	set, _ := (&Settings{}).resolve()
	sv := newSolver(set, d, false)
	sv.solve(d.ybar, d.w, []float64{98, 2, -6.5, -1.1}) // start on the twin
	if sv.res.X[iTop] > sv.res.X[iBottom] {
		t.Skip("the solver left the twin by itself")
	}
	twin := sv.res
	canonicalTwin(&twin, Hill.Roles())
	r, _ := Fit(c, nil)
	for j, p := range r.Params {
		if math.Abs(twin.X[j]-p.Estimate) > 1e-6*math.Max(1, math.Abs(p.Estimate)) {
			t.Errorf("%s: twin mapped to %v, direct fit %v", p.Name, twin.X[j], p.Estimate)
		}
		if se := math.Sqrt(twin.Cov[j*4+j]) * math.Sqrt(r.RSS/float64(r.DOF)/(twin.RSS/float64(twin.DOF))); math.Abs(se-p.SE) > 1e-4*p.SE {
			t.Errorf("SE(%s): twin %v, direct %v", p.Name, se, p.SE)
		}
	}
	if r.Params[iBottom].Estimate > r.Params[iTop].Estimate || r.Params[iHill].Estimate < 0 {
		t.Errorf("fit not canonical: %v", r.Estimates())
	}
}
