package drift

import (
	"fmt"
	"time"
)

// State is the running state of every chart after a series' last point:
// all that judging one more point needs, so that a chart can be carried
// forward point by point instead of re-evaluated from its start. Resume
// continued from a State gives bit-identical results to Evaluate over the
// whole series, because it runs the same recurrences from the same
// numbers:
//
//	eₜ = λxₜ + (1 − λ)eₜ₋₁,  Dₜ = Dₜ₋₁·(1 − λ)²  (EWMA and its limit's decay, Dₜ = (1 − λ)^(2t))
//	C⁺ₜ = max(0, C⁺ₜ₋₁ + zₜ − k),  C⁻ₜ = max(0, C⁻ₜ₋₁ − zₜ − k)
//
// and, for the multirules, the lengths of the current runs beyond ±2, ±1
// and 0 SD, which stand for the trailing z values the rules look at (a
// run of length ≥ 10 decides every rule as a window of the last 10 z
// values would). The zero State is the state before the first point.
type State struct {
	// N is the number of points judged.
	N int `json:"n"`
	// LastTime and LastGroup are the last point's time and group.
	LastTime  time.Time `json:"last_time"`
	LastGroup string    `json:"last_group"`
	// EWMA is eₜ and EWMADecay (1 − λ)^(2t), kept as the running product
	// Evaluate computes (not recomputed by a power, which could differ in
	// the last bit).
	EWMA      float64 `json:"ewma"`
	EWMADecay float64 `json:"ewma_decay"`
	// CUSUMHi and CUSUMLo are C⁺ₜ and C⁻ₜ.
	CUSUMHi float64 `json:"cusum_hi"`
	CUSUMLo float64 `json:"cusum_lo"`
	// Runs are the current runs of consecutive z > 2, z < −2, z > 1,
	// z < −1, z > 0, z < 0.
	Runs [6]int `json:"runs"`
	// GroupAbove2 and GroupBelow2 say whether the last point's group has
	// a point above +2 SD, below −2 SD (R-4s).
	GroupAbove2 bool `json:"group_above2"`
	GroupBelow2 bool `json:"group_below2"`
}

// State returns the chart's running state after its last point, to
// continue it with Resume.
func (c *Chart) State() State { return c.end }

// Resume judges points that follow a series whose state is st, against
// the baseline and settings that series was judged with (the caller keeps
// them together: a State does not record them). Points[i] of the result
// is the evaluation of points[i]; the result's State covers the whole
// series. Errors are those of Evaluate, and a first point earlier than
// st.LastTime or of st's group after other points is an error as in a
// whole series.
func Resume(st State, points []Point, base Baseline, set *Settings) (*Chart, error) {
	if st.N == 0 {
		return Evaluate(points, base, set)
	}
	s, err := set.Resolve()
	if err != nil {
		return nil, err
	}
	if err := base.Validate(); err != nil {
		return nil, err
	}
	if err := checkPoints(points); err != nil {
		return nil, err
	}
	if len(points) > 0 && points[0].Time.Before(st.LastTime) {
		return nil, fieldErr("points[0].time", "%s is before the chart's last point's %s",
			points[0].Time.Format(time.RFC3339), st.LastTime.Format(time.RFC3339))
	}
	e := newEvaluator(base, s)
	e.restore(st)
	return e.run(points, st.LastGroup, base, s), nil
}

// run judges points after a last point of group prevGroup ("" for none).
func (e *evaluator) run(points []Point, prevGroup string, base Baseline, s Settings) *Chart {
	c := &Chart{Baseline: base, Settings: s, Points: make([]PointResult, len(points)), Status: InControl}
	for i, p := range points {
		prev := prevGroup
		if i > 0 {
			prev = points[i-1].Group
		}
		newGroup := p.Group == "" || (i == 0 && e.n == 0) || prev != p.Group
		c.Points[i] = e.step(p.Value, newGroup)
		e.n++
	}
	if n := len(c.Points); n > 0 {
		c.Status = c.Points[n-1].Status
		c.end.LastTime, c.end.LastGroup = points[n-1].Time, points[n-1].Group
	} else if e.n > 0 {
		c.end.LastTime, c.end.LastGroup = e.last.LastTime, e.last.LastGroup
	}
	e.save(&c.end)
	return c
}

// restore sets the running state from st.
func (e *evaluator) restore(st State) {
	e.n, e.last = st.N, st
	e.ewma.e, e.ewma.decay = st.EWMA, st.EWMADecay
	e.cusum.hi, e.cusum.lo = st.CUSUMHi, st.CUSUMLo
	w := &e.wg
	w.above2, w.below2, w.above1, w.below1, w.above0, w.below0 = st.Runs[0], st.Runs[1], st.Runs[2], st.Runs[3], st.Runs[4], st.Runs[5]
	w.groupAbove2, w.groupBelow2 = st.GroupAbove2, st.GroupBelow2
}

// save writes the running state into st (its N and counters; the last
// point's time and group are the caller's).
func (e *evaluator) save(st *State) {
	st.N = e.n
	st.EWMA, st.EWMADecay = e.ewma.e, e.ewma.decay
	st.CUSUMHi, st.CUSUMLo = e.cusum.hi, e.cusum.lo
	w := &e.wg
	st.Runs = [6]int{w.above2, w.below2, w.above1, w.below1, w.above0, w.below0}
	st.GroupAbove2, st.GroupBelow2 = w.groupAbove2, w.groupBelow2
}

// String is a short form for test failures.
func (st State) String() string {
	return fmt.Sprintf("n=%d last=%s/%s ewma=%v decay=%v cusum=%v/%v runs=%v group=%v/%v", st.N,
		st.LastTime.Format(time.RFC3339Nano), st.LastGroup, st.EWMA, st.EWMADecay, st.CUSUMHi, st.CUSUMLo, st.Runs, st.GroupAbove2, st.GroupBelow2)
}
