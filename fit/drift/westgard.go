package drift

// westgard is the running state of the multirule: the lengths of the
// current runs of consecutive points beyond each limit, and what the
// current group has seen. Runs replace a window of past values, so a
// step is O(1).
type westgard struct {
	trigger bool
	// consecutive points with z > 2, z < −2, z > 1, z < −1, z > 0, z < 0
	above2, below2, above1, below1, above0, below0 int
	// whether the current group has a point above +2 SD, below −2 SD
	groupAbove2, groupBelow2 bool
}

// step adds zᵢ; newGroup says it starts a new group. It returns the rules
// violated at this point.
func (w *westgard) step(z float64, newGroup bool) RuleSet {
	count := func(n *int, in bool) {
		if in {
			*n++
		} else {
			*n = 0
		}
	}
	count(&w.above2, z > 2)
	count(&w.below2, z < -2)
	count(&w.above1, z > 1)
	count(&w.below1, z < -1)
	count(&w.above0, z > 0)
	count(&w.below0, z < 0)
	if newGroup {
		w.groupAbove2, w.groupBelow2 = false, false
	}
	// R-4s pairs this point with an earlier one of its group.
	r4s := (z > 2 && w.groupBelow2) || (z < -2 && w.groupAbove2)
	w.groupAbove2 = w.groupAbove2 || z > 2
	w.groupBelow2 = w.groupBelow2 || z < -2

	var v RuleSet
	beyond2 := z > 2 || z < -2
	if beyond2 {
		v |= Set(Rule12s)
	}
	if w.trigger && !beyond2 {
		return v
	}
	if z > 3 || z < -3 {
		v |= Set(Rule13s)
	}
	if w.above2 >= 2 || w.below2 >= 2 {
		v |= Set(Rule22s)
	}
	if r4s {
		v |= Set(RuleR4s)
	}
	if w.above1 >= 4 || w.below1 >= 4 {
		v |= Set(Rule41s)
	}
	if w.above0 >= 10 || w.below0 >= 10 {
		v |= Set(Rule10x)
	}
	return v
}
