package fit

import "math"

// startValues returns starting values for the model from the data, best
// first. The first is built from the data's shape; the rest spread the
// potency over the tested range and vary the slope, for the fits whose first
// start fails. Fixed parameters are set to their values in every start.
func startValues(set *resolved, d *design) [][]float64 {
	var starts [][]float64
	switch set.model {
	case Hill:
		starts = hillStarts(set, d)
	case Hill5:
		for _, h := range hillStarts(set, d) {
			for _, s := range []float64{1, 0.5, 2} {
				starts = append(starts, append(append([]float64(nil), h...), s))
			}
		}
	case Bell:
		starts = bellStarts(set, d)
	}
	lower := make([]float64, len(set.fixed))
	upper := make([]float64, len(set.fixed))
	set.bounds(d, lower, upper)
	for _, st := range starts {
		for j := range st {
			if set.fixed[j] {
				st[j] = set.fixedValue[j]
			}
			st[j] = math.Min(math.Max(st[j], lower[j]), upper[j])
		}
	}
	return starts
}

// plateaus returns the starting bottom and top: the fixed values when fixed,
// else the smallest and largest level means (never equal).
func plateaus(set *resolved, d *design) (b, t float64) {
	b, t = math.Inf(1), math.Inf(-1)
	for _, y := range d.ybar {
		b, t = math.Min(b, y), math.Max(t, y)
	}
	if set.fixed[iBottom] {
		b = set.fixedValue[iBottom]
	}
	if set.fixed[iTop] {
		t = set.fixedValue[iTop]
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
	if set.fixed[iHill] {
		if set.fixedValue[iHill] < 0 {
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
// through the levels whose p lies in (0.05, 0.95).
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
	if set.fixed[iHill] {
		h = set.fixedValue[iHill]
	}
	starts := [][]float64{{b, t, L, h}}
	span := math.Max(hi-lo, 1)
	for _, f := range []float64{0.5, 0.2, 0.8} {
		for _, hh := range []float64{dir, 3 * dir, -dir} {
			starts = append(starts, []float64{b, t, lo + f*span, hh})
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

// bellStarts places log_ec50 where the rising limb crosses half the peak and
// log_ic50 where the falling limb does, with unit slopes.
func bellStarts(set *resolved, d *design) [][]float64 {
	b, t := plateaus(set, d)
	lo, hi, ok := d.finiteRange()
	if !ok {
		lo, hi = 0, 0
	}
	peak := 0
	for l, y := range d.ybar {
		if y > d.ybar[peak] {
			peak = l
		}
	}
	half := (b + d.ybar[peak]) / 2
	L, Li := (lo+d.x[peak])/2, hi+1
	if math.IsInf(d.x[peak], -1) {
		L = lo
	}
	for l := 1; l <= peak; l++ {
		if !math.IsInf(d.x[l-1], -1) && d.ybar[l-1] <= half && d.ybar[l] >= half {
			L = d.x[l-1] + (d.x[l]-d.x[l-1])*(half-d.ybar[l-1])/(d.ybar[l]-d.ybar[l-1]+1e-300)
			break
		}
	}
	for l := peak + 1; l < len(d.x); l++ {
		if d.ybar[l-1] >= half && d.ybar[l] <= half {
			Li = d.x[l-1] + (d.x[l]-d.x[l-1])*(d.ybar[l-1]-half)/(d.ybar[l-1]-d.ybar[l]+1e-300)
			break
		}
	}
	if !set.fixed[iTop] {
		t += 0.1 * (t - b) // the unblocked maximum lies above the observed peak
	}
	span := math.Max(hi-lo, 1)
	return [][]float64{
		{b, t, L, 1, Li, 1},
		{b, t, L, 2, Li, 2},
		{b, t, lo + 0.3*span, 1, lo + 0.8*span, 1},
		{b, 2 * t, L - 0.5, 1, Li + 0.5, 1},
	}
}
