package fit

import (
	"math"
	"sort"
)

// Point is one observation. Conc is molar and ≥ 0 (0 is the vehicle);
// Weight is a relative weight > 0, and zero means 1: the zero value is a
// point given no weight. A weight of 0 therefore cannot mean "leave this
// point out" here, and the edges refuse an explicit 0 (the API's weight
// field, the weight column of a CSV) with a message that says so, rather
// than let it count as 1; a point to be left out is left out of the curve.
type Point struct {
	Conc, Response, Weight float64
}

// Curve is the data of one concentration–response curve.
type Curve struct {
	ID     string
	Points []Point
}

// design is a curve grouped by concentration (see the package comment).
type design struct {
	x      []float64 // log10 concentration of each level, ascending; −Inf for the vehicle
	w      []float64 // Wₗ, the summed weight of each level
	ybar   []float64 // ȳₗ, the weighted mean response of each level
	pureSS float64   // Σ wₗⱼ(yₗⱼ − ȳₗ)²
	tss    float64   // Σ w(y − ȳ)², about the overall weighted mean
	n      int       // number of points
	// identical: every fitted response is the same number.
	identical bool

	// Per point, in level order: the level, the response and the weight.
	level []int
	y     []float64
	pw    []float64
	// start[l] is the index of level l's first point; start[len(x)] = n.
	start []int
}

// validatePoints checks every point and returns the first problem found.
func validatePoints(pts []Point) error {
	for i, p := range pts {
		switch {
		case math.IsNaN(p.Conc) || math.IsInf(p.Conc, 0):
			return &PointError{i, "conc", invalid("concentration is not a finite number")}
		case p.Conc < 0:
			return &PointError{i, "conc", invalid("concentration %g is negative", p.Conc)}
		case math.IsNaN(p.Response) || math.IsInf(p.Response, 0):
			return &PointError{i, "response", invalid("response is not a finite number")}
		case math.IsNaN(p.Weight) || math.IsInf(p.Weight, 0) || p.Weight < 0:
			return &PointError{i, "weight", invalid("weight must be a finite number ≥ 0 (0 means 1)")}
		}
	}
	return nil
}

// newDesign groups validated points by concentration.
func newDesign(pts []Point) *design {
	n := len(pts)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return pts[idx[a]].Conc < pts[idx[b]].Conc })
	d := &design{n: n, level: make([]int, n), y: make([]float64, n), pw: make([]float64, n)}
	d.identical = n > 0
	for k, i := range idx {
		p := pts[i]
		w := p.Weight
		if w == 0 {
			w = 1
		}
		if k == 0 || p.Conc != pts[idx[k-1]].Conc {
			d.x = append(d.x, log10Conc(p.Conc))
			d.w = append(d.w, 0)
			d.ybar = append(d.ybar, 0)
			d.start = append(d.start, k)
		}
		l := len(d.x) - 1
		d.level[k], d.y[k], d.pw[k] = l, p.Response, w
		if p.Response != pts[idx[0]].Response {
			d.identical = false
		}
		d.w[l] += w
		d.ybar[l] += w * p.Response
	}
	d.start = append(d.start, n)
	var sw, swy float64
	for l := range d.x {
		swy += d.ybar[l]
		sw += d.w[l]
		d.ybar[l] /= d.w[l]
	}
	mean := swy / sw
	for k := range d.y {
		r := d.y[k] - d.ybar[d.level[k]]
		d.pureSS += d.pw[k] * r * r
		t := d.y[k] - mean
		d.tss += d.pw[k] * t * t
	}
	return d
}

// finiteRange returns the smallest and largest finite x (tested
// concentrations other than the vehicle); ok is false when there are none.
func (d *design) finiteRange() (lo, hi float64, ok bool) {
	for _, x := range d.x {
		if math.IsInf(x, -1) {
			continue
		}
		if !ok {
			lo, ok = x, true
		}
		hi = x
	}
	return lo, hi, ok
}
