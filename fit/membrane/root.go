package membrane

import "math"

// scanSteps is the number of cells of the grid on which the steady-state
// equation with Mg²⁺ block is searched for roots: a cell of (E_max −
// E_min)/4000, about 0.04 mV for a cell between E_K and E_Na. Two roots
// closer than one cell are not told apart.
const scanSteps = 4000

// bisectTol is the width below which a root's bracket stops being halved
// (mV), with at most 100 halvings.
const bisectTol = 1e-12

// mgEquation is the steady-state equation of a cell with resting
// conductances and a Mg²⁺-blocked ligand conductance g:
//
//	F(V) = (Σgᵢ + g·B(V))·V − (ΣgᵢEᵢ + g·B(V)·E_rev) = 0
//
// (the chord-conductance equation, FACTS §7, with B from MgBlock). Every
// root lies between the smallest and the largest reversal potential, lo and
// hi.
type mgEquation struct {
	gs, gse  float64 // Σgᵢ and ΣgᵢEᵢ of the resting conductances
	lo, hi   float64
	mg, erev float64
}

func newMgEquation(rest []Conductance, ch Channel) mgEquation {
	e := mgEquation{lo: ch.Reversal, hi: ch.Reversal, mg: ch.MgOut, erev: ch.Reversal}
	for _, c := range rest {
		e.gs += c.G
		e.gse += c.G * c.E
		e.lo, e.hi = math.Min(e.lo, c.E), math.Max(e.hi, c.E)
	}
	return e
}

// chord is the steady potential without Mg²⁺ block, ChordVoltage of the
// resting conductances and g at E_rev (the same sums in the same order, so
// the same number), without appending to the caller's slice.
func (e *mgEquation) chord(g float64) float64 {
	gt, ge := e.gs+g, e.gse+g*e.erev
	if !(gt > 0) {
		return math.NaN()
	}
	return ge / gt
}

// f is F(V) with ligand conductance g.
func (e *mgEquation) f(v, g float64) float64 {
	gb := g * MgBlock(e.mg, v)
	return (e.gs+gb)*v - (e.gse + gb*e.erev)
}

// x is grid point k of the scan, k = 0 … scanSteps.
func (e *mgEquation) x(k int) float64 {
	return e.lo + (e.hi-e.lo)*float64(k)/scanSteps
}

// bisect halves the bracket [a, b], F(a) = fa of the other sign than F(b),
// to bisectTol and returns its midpoint.
func (e *mgEquation) bisect(a, b, fa, g float64) float64 {
	for i := 0; i < 100 && b-a > bisectTol; i++ {
		m := (a + b) / 2
		if fm := e.f(m, g); fm*fa > 0 {
			a, fa = m, fm
		} else {
			b = m
		}
	}
	return (a + b) / 2
}

// cellRoot returns the root the scan assigns to cell k ≥ 1, the interval
// [x(k−1), x(k)] with F values f0 and f1: x(k) when F vanishes there, the
// bisected root when F changes sign inside, and ok false otherwise. Cell 0
// is the point x(0), a root when F vanishes there.
func (e *mgEquation) cellRoot(k int, f0, f1, g float64) (root float64, ok bool) {
	switch {
	case f1 == 0:
		return e.x(k), true
	case k > 0 && f0*f1 < 0:
		return e.bisect(e.x(k-1), e.x(k), f0, g), true
	}
	return 0, false
}

// scan finds every root of F on the grid and returns the one nearest near
// (the lowest of equally near ones; the lowest when near is NaN), NaN when
// there is none, and whether there is more than one.
func (e *mgEquation) scan(g, near float64) (v float64, multiple bool) {
	var roots []float64
	f0 := e.f(e.x(0), g)
	if r, ok := e.cellRoot(0, 0, f0, g); ok {
		roots = append(roots, r)
	}
	for k := 1; k <= scanSteps; k++ {
		f1 := e.f(e.x(k), g)
		if r, ok := e.cellRoot(k, f0, f1, g); ok {
			roots = append(roots, r)
		}
		f0 = f1
	}
	if len(roots) == 0 {
		return math.NaN(), false
	}
	best := roots[0]
	for _, r := range roots[1:] {
		if math.Abs(r-near) < math.Abs(best-near) {
			best = r
		}
	}
	return best, len(roots) > 1
}

// nearest returns the root of F nearest near, the same number, bit for bit,
// as scan(g, near) (it examines the same grid cells with the same
// arithmetic), but examining only the cells that could hold it: it walks
// the scan's grid outward from near, one cell at a time on the side whose
// next cell is closer, and stops when the next cells on both sides lie
// farther from near than the nearest root found. Continuing from the
// previous concentration's root, that is a few cells and one bisection of
// ≤ 35 halvings instead of 4 000 evaluations. With no root, or near NaN or
// off the grid, it is the full scan.
func (e *mgEquation) nearest(g, near float64) float64 {
	if !(near >= e.lo && near <= e.hi) || e.hi == e.lo {
		v, _ := e.scan(g, near)
		return v
	}
	k0 := int(math.Round((near - e.lo) / (e.hi - e.lo) * scanSteps))
	k0 = min(max(k0, 0), scanSteps)
	// The next cell on the left is cell a, [x(a−1), x(a)], with fa =
	// F(x(a)); the next on the right is cell b+1, with fb = F(x(b)).
	a, b := k0, k0
	fa := e.f(e.x(k0), g)
	fb := fa
	best, bestDist := math.NaN(), math.Inf(1)
	consider := func(r float64) {
		d := math.Abs(r - near)
		if d < bestDist || (d == bestDist && r < best) {
			best, bestDist = r, d
		}
	}
	for a >= 0 || b < scanSteps {
		dl, dr := math.Inf(1), math.Inf(1)
		if a >= 0 {
			dl = math.Max(0, near-e.x(a))
		}
		if b < scanSteps {
			dr = math.Max(0, e.x(b)-near)
		}
		if math.Min(dl, dr) > bestDist {
			break
		}
		if dl <= dr {
			f0 := 0.0
			if a > 0 {
				f0 = e.f(e.x(a-1), g)
			}
			if r, ok := e.cellRoot(a, f0, fa, g); ok {
				consider(r)
			}
			a, fa = a-1, f0
		} else {
			f1 := e.f(e.x(b+1), g)
			if r, ok := e.cellRoot(b+1, fb, f1, g); ok {
				consider(r)
			}
			b, fb = b+1, f1
		}
	}
	return best
}
