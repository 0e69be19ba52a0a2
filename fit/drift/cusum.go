package drift

// cusum is the running state of a two-sided tabular CUSUM on z (Page 1954,
// Biometrika 41:100).
type cusum struct {
	k, h   float64
	hi, lo float64 // C⁺ and C⁻
}

// step adds zₜ: C⁺ = max(0, C⁺ + z − k), C⁻ = max(0, C⁻ − z − k); it
// reports whether either is above h.
func (c *cusum) step(z float64) (hi, lo float64, signal bool) {
	c.hi = max(0, c.hi+z-c.k)
	c.lo = max(0, c.lo-z-c.k)
	return c.hi, c.lo, c.hi > c.h || c.lo > c.h
}
