package drift

import (
	"fmt"
	"time"
)

// Point is one value of a series.
type Point struct {
	// Time orders the series: it must not decrease along the slice. The
	// zero time is allowed everywhere (then the slice order is the order).
	Time time.Time
	// Value is the measured value, in the baseline's units; finite.
	Value float64
	// Group names the run the value belongs to (a plate): R-4s looks
	// within a group. A group's points must be consecutive. An empty
	// Group makes the point a group of its own.
	Group string
}

// Status is the state of a point or chart, in the form to store.
type Status string

// The statuses.
const (
	InControl    Status = "in_control"     // no rule violated
	Warning      Status = "warning"        // only 1-2s
	OutOfControl Status = "out_of_control" // a rejection rule (random or systematic)
)

// statusOf is the status of a point with the violations v.
func statusOf(v RuleSet) Status {
	switch {
	case v.Rejects():
		return OutOfControl
	case v != 0:
		return Warning
	}
	return InControl
}

// PointResult is the evaluation of one point.
type PointResult struct {
	// Z = (value − mean)/SD.
	Z float64
	// EWMA is eₜ in the value's units and EWMALo, EWMAHi its limits at t.
	EWMA, EWMALo, EWMAHi float64
	// CUSUMHi and CUSUMLo are C⁺ₜ and C⁻ₜ, in SD units.
	CUSUMHi, CUSUMLo float64
	// Violations are the rules violated at this point, among the enabled
	// ones.
	Violations RuleSet
	// Status follows from Violations.
	Status Status
}

// Chart is a series judged against its baseline.
type Chart struct {
	Baseline Baseline
	// Settings are the settings used, defaults filled in.
	Settings Settings
	// Points[i] is the evaluation of the series' point i.
	Points []PointResult
	// Status is the latest point's status: whether the assay is in
	// control now (InControl for an empty series). Westgard rules judge
	// each run afresh; EWMA and CUSUM carry the past with them, so a
	// persistent shift keeps the status OutOfControl.
	Status Status
	// end is the running state after the last point (State).
	end State
}

// LastViolation is the index of the last point that violates any rule,
// warnings included, or −1.
func (c *Chart) LastViolation() int {
	for i := len(c.Points) - 1; i >= 0; i-- {
		if c.Points[i].Violations != 0 {
			return i
		}
	}
	return -1
}

// Evaluate judges the series against the baseline with the settings (nil
// means the defaults; see Settings). Invalid settings, a bad baseline, a
// non-finite value, a decreasing time or a group split by other points are
// an error naming the field ("ewma_lambda", "baseline.sd",
// "points[3].value", …).
func Evaluate(points []Point, base Baseline, set *Settings) (*Chart, error) {
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
	return newEvaluator(base, s).run(points, "", base, s), nil
}

func checkPoints(points []Point) error {
	var closed map[string]struct{} // groups already left behind
	for i, p := range points {
		if !finite(p.Value) {
			return fieldErr(fmt.Sprintf("points[%d].value", i), "must be finite, got %v", p.Value)
		}
		if i == 0 {
			continue
		}
		prev := points[i-1]
		if p.Time.Before(prev.Time) {
			return fieldErr(fmt.Sprintf("points[%d].time", i), "%s is before the previous point's %s; send the series in time order",
				p.Time.Format(time.RFC3339), prev.Time.Format(time.RFC3339))
		}
		if p.Group == prev.Group {
			continue
		}
		if prev.Group != "" {
			if closed == nil {
				closed = make(map[string]struct{}, len(points)-i)
			}
			closed[prev.Group] = struct{}{}
		}
		if _, seen := closed[p.Group]; seen && p.Group != "" {
			return fieldErr(fmt.Sprintf("points[%d].group", i), "group %q appears again after other points; keep a group's points together", p.Group)
		}
	}
	return nil
}

// evaluator runs every chart over a series, one point at a time.
type evaluator struct {
	base  Baseline
	rules RuleSet
	wg    westgard
	ewma  ewma
	cusum cusum
	// n is the number of points judged; last the state it was restored
	// from (Resume).
	n    int
	last State
}

func newEvaluator(b Baseline, s Settings) *evaluator {
	return &evaluator{
		base:  b,
		rules: s.Rules,
		wg:    westgard{trigger: s.Mode == ModeTrigger},
		ewma:  newEWMA(b, s.EWMALambda, s.EWMAL),
		cusum: cusum{k: s.CUSUMK, h: s.CUSUMH},
	}
}

func (e *evaluator) step(x float64, newGroup bool) PointResult {
	z := e.base.Z(x)
	r := PointResult{Z: z}
	v := e.wg.step(z, newGroup)
	r.EWMA, r.EWMALo, r.EWMAHi = e.ewma.step(x)
	if r.EWMA > r.EWMAHi || r.EWMA < r.EWMALo {
		v |= Set(RuleEWMA)
	}
	var signal bool
	r.CUSUMHi, r.CUSUMLo, signal = e.cusum.step(z)
	if signal {
		v |= Set(RuleCUSUM)
	}
	r.Violations = v & e.rules
	r.Status = statusOf(r.Violations)
	return r
}

// Series makes a series of values without times or groups, in slice order.
func Series(values []float64) []Point {
	p := make([]Point, len(values))
	for i, v := range values {
		p[i] = Point{Value: v}
	}
	return p
}
