package fit

import "math"

// startValues returns starting values for the model from the data, best
// first. The first is built from the data's shape; the rest spread the
// potency over the tested range and vary the slope, for the fits whose first
// start fails. Fixed parameters are set to their values in every start.
func startValues(set *resolved, d *design) [][]float64 {
	starts := set.curve.starts(set, d)
	clampStarts(set, d, starts)
	return starts
}

// plateaus returns the starting bottom and top: the fixed values when fixed,
// else the smallest and largest level means (never equal).
func plateaus(set *resolved, d *design) (b, t float64) {
	b, t = math.Inf(1), math.Inf(-1)
	for _, y := range d.ybar {
		b, t = math.Min(b, y), math.Max(t, y)
	}
	r := set.curve.roles
	if set.fixed[r.Bottom] {
		b = set.fixedValue[r.Bottom]
	}
	if set.fixed[r.Top] {
		t = set.fixedValue[r.Top]
	}
	if t <= b {
		t = b + math.Max(1, math.Abs(b))
	}
	return b, t
}

// direction returns +1 when the response rises with concentration and −1 when
// it falls: the sign of the weighted least-squares slope of the level means
// on x, with the vehicle placed one decade below the lowest concentration.
func direction(set *resolved, d *design) float64 {
	if j := set.curve.roles.Hill; set.fixed[j] {
		if set.fixedValue[j] < 0 {
			return -1
		}
		return 1
	}
	lo, _, _ := d.finiteRange()
	var sw, sx, sy, sxx, sxy float64
	for l, x := range d.x {
		if math.IsInf(x, -1) {
			x = lo - 1
		}
		w, y := d.w[l], d.ybar[l]
		sw += w
		sx += w * x
		sy += w * y
		sxx += w * x * x
		sxy += w * x * y
	}
	if sw*sxy-sx*sy < 0 {
		return -1
	}
	return 1
}

// hillStarts linearises the Hill equation: with p = (y − bottom)/(top −
// bottom), log10(p/(1 − p)) = (x − log_ec50)·hill, a straight line in x
// through the levels whose p lies in (0.05, 0.95). It suits any sigmoid
// model: it sets the four shared parameters (Roles) and leaves the
// model's others at zero, for the model's starts to fill in.
func hillStarts(set *resolved, d *design) [][]float64 {
	b, t := plateaus(set, d)
	dir := direction(set, d)
	lo, hi, ok := d.finiteRange()
	if !ok {
		lo, hi = 0, 0
	}
	mid := (lo + hi) / 2
	L, h := mid, dir
	var n, sx, sz, sxx, sxz float64
	for l, x := range d.x {
		if math.IsInf(x, -1) {
			continue
		}
		p := (d.ybar[l] - b) / (t - b)
		if p <= 0.05 || p >= 0.95 {
			continue
		}
		z := math.Log10(p / (1 - p))
		n++
		sx += x
		sz += z
		sxx += x * x
		sxz += x * z
	}
	if den := n*sxx - sx*sx; n >= 2 && den > 0 {
		slope := (n*sxz - sx*sz) / den
		if slope*dir > 0 {
			h = slope
			L = (sx - sz/slope) / n // x̄ − z̄/slope
		}
	} else if x50, ok := crossing(d, (b+t)/2, dir); ok {
		L = x50
	}
	r := set.curve.roles
	if set.fixed[r.Hill] {
		h = set.fixedValue[r.Hill]
	}
	np := len(set.fixed)
	start := func(b, t, L, h float64) []float64 {
		st := make([]float64, np)
		st[r.Bottom], st[r.Top], st[r.LogEC50], st[r.Hill] = b, t, L, h
		return st
	}
	starts := [][]float64{start(b, t, L, h)}
	span := math.Max(hi-lo, 1)
	for _, f := range []float64{0.5, 0.2, 0.8} {
		for _, hh := range []float64{dir, 3 * dir, -dir} {
			starts = append(starts, start(b, t, lo+f*span, hh))
		}
	}
	return starts
}

// crossing returns the x at which the level means first cross y0 going in the
// direction dir, by linear interpolation between finite levels.
func crossing(d *design, y0, dir float64) (float64, bool) {
	for l := 1; l < len(d.x); l++ {
		x0, x1 := d.x[l-1], d.x[l]
		if math.IsInf(x0, -1) {
			continue
		}
		a, b := (d.ybar[l-1]-y0)*dir, (d.ybar[l]-y0)*dir
		if a <= 0 && b >= 0 && a != b {
			return x0 + (x1-x0)*(-a)/(b-a), true
		}
	}
	return 0, false
}
