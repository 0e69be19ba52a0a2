package service

import (
	"encoding/json"
	"fmt"
	"math"
	"time"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/drift"
)

// chartState is what a chart row keeps (db.DriftChart.State, as JSON) so
// that the next plate of its assay, when it arrives in time order, is
// judged from it alone (advanceDrift) instead of re-reading the assay's
// history.
type chartState struct {
	// At and Plate are the assay's last evaluated plate (experiment
	// time, then plate ID): a later plate may continue the state, an
	// earlier one re-evaluates the chart from its start.
	At    time.Time `json:"at"`
	Plate string    `json:"plate"`
	// Base are the baseline numbers the chart was judged against (mean,
	// SD; for r4s the max then min control means' mean and SD); nil while
	// the chart has no baseline.
	Base []float64 `json:"base,omitempty"`
	// Accepted counts, while an auto baseline lacks plates, the accepted
	// plates with a finite value so far.
	Accepted int `json:"accepted,omitempty"`
	// Chart is the fit/drift running state after the chart's last point.
	Chart drift.State `json:"chart"`
}

func (st *chartState) encode() (string, error) {
	b, err := json.Marshal(st)
	if err != nil {
		return "", fmt.Errorf("encode drift state: %w", err)
	}
	return string(b), nil
}

// decodeState reads a stored state; nil when there is none or it does
// not read (then the chart is re-evaluated, which rewrites it).
func decodeState(c *db.DriftChart) *chartState {
	if c == nil || c.State == "" {
		return nil
	}
	var st chartState
	if json.Unmarshal([]byte(c.State), &st) != nil {
		return nil
	}
	return &st
}

// after reports whether plate fig comes after the state's last plate.
func (st *chartState) after(fig *db.DriftPlate) bool {
	if c := fig.MeasuredAt.Compare(st.At); c != 0 {
		return c > 0
	}
	return fig.PlateID > st.Plate
}

// sameBase reports whether two baselines are the same numbers, bit for bit.
func sameBase(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// stateOf is the state after a full evaluation over plates (the assay's
// series, in order). base are the baseline numbers (nil: none).
func stateOf(plates []db.DriftPlate, base []float64, accepted int, ch *drift.Chart) *chartState {
	st := &chartState{Base: base, Accepted: accepted}
	if n := len(plates); n > 0 {
		st.At, st.Plate = plates[n-1].MeasuredAt, plates[n-1].PlateID
	}
	if ch != nil {
		st.Chart = ch.State()
	}
	return st
}

// storedBase is a chart's baseline numbers as the row and its state say,
// without the assay's plates: an explicit or plates baseline from the
// row, an auto one from the state (its first accepted plates all precede
// the state's last plate, so a later plate cannot change it). ok is
// false when the row's baseline does not validate.
func storedBase(row *db.DriftChart, st *chartState) (base []float64, ok bool) {
	if row.Source == db.BaselineAuto {
		return st.Base, true
	}
	b := drift.Baseline{Mean: row.Mean, SD: row.SD}
	if b.Validate() != nil {
		return nil, false
	}
	return []float64{b.Mean, b.SD}, true
}

// advanceDrift judges plate fig from its assay's stored chart states
// alone, when every chart has one and fig comes after its last plate and
// no chart's baseline gets established by fig; ok is false otherwise
// (then the caller re-evaluates from the assay's plates). The result is
// the one the full evaluation gives: drift.Resume is exact, and a plate
// after the last one changes no earlier point.
func advanceDrift(assayID string, fig db.DriftPlate, rows map[string]*db.DriftChart, now time.Time) (*driftPlan, bool, error) {
	states := make(map[string]*chartState, len(rows))
	bases := make(map[string][]float64, len(rows))
	for _, m := range allMetrics() {
		row := rows[m]
		st := decodeState(row)
		if st == nil || !st.after(&fig) {
			return nil, false, nil
		}
		base := st.Base
		if m != metricR4s {
			var ok bool
			if base, ok = storedBase(row, st); !ok || !sameBase(base, st.Base) {
				return nil, false, nil
			}
		}
		states[m], bases[m] = st, base
	}
	p := &driftPlan{assayID: assayID}
	for _, m := range allMetrics() {
		row, st := rows[m], states[m]
		next := &chartState{At: fig.MeasuredAt, Plate: fig.PlateID, Base: st.Base, Accepted: st.Accepted, Chart: st.Chart}
		ev := &evaluated{metric: m, status: row.Status}
		var series []drift.Point
		var set *drift.Settings
		var base drift.Baseline
		if m == metricR4s {
			maxB, minB := bases["max_control_mean"], bases["min_control_mean"]
			if maxB == nil || minB == nil {
				if st.Base != nil {
					return nil, false, nil
				}
			} else {
				if !sameBase(append(append([]float64{}, maxB...), minB...), st.Base) {
					return nil, false, nil
				}
				if isFinite(fig.MaxMean) && isFinite(fig.MinMean) {
					zMax := drift.Baseline{Mean: maxB[0], SD: maxB[1]}.Z(fig.MaxMean)
					zMin := drift.Baseline{Mean: minB[0], SD: minB[1]}.Z(fig.MinMean)
					ev.points = []chartPoint{{plate: &fig, value: zMax}, {plate: &fig, value: zMin}}
					series = []drift.Point{{Time: fig.MeasuredAt, Value: zMax, Group: fig.PlateID}, {Time: fig.MeasuredAt, Value: zMin, Group: fig.PlateID}}
				}
			}
			base, set = drift.Baseline{Mean: 0, SD: 1}, &drift.Settings{Rules: drift.Set(drift.RuleR4s)}
		} else {
			dm, _ := findMetric(m)
			v := dm.value(&fig)
			if st.Base == nil {
				// No baseline yet: fig must not establish it.
				if fig.Pass && isFinite(v) {
					next.Accepted++
				}
				if next.Accepted >= baselineRuns(row) {
					return nil, false, nil
				}
			} else if isFinite(v) {
				ev.points = []chartPoint{{plate: &fig, value: v}}
				series = []drift.Point{{Time: fig.MeasuredAt, Value: v, Group: fig.PlateID}}
			}
			if st.Base != nil {
				base = drift.Baseline{Mean: st.Base[0], SD: st.Base[1]}
			}
		}
		if st.Base != nil {
			source := row.Source
			if m == metricR4s {
				source = db.BaselineStandard
			}
			wb := &wire.DriftBaseline{Mean: wire.Num(base.Mean), SD: wire.Num(base.SD), Source: source}
			status := ev.status
			ch, err := drift.Resume(st.Chart, series, base, set)
			if err != nil {
				return nil, false, fmt.Errorf("continue drift chart %s/%s: %w", assayID, m, err)
			}
			ev.fill(ch, base, wb)
			if len(series) == 0 {
				ev.status = status // no new point: the latest point's status stands
			}
			next.Chart = ch.State()
		}
		ev.state = next
		p.charts = append(p.charts, ev.chartRow(assayID, row, now, driftActor))
		p.violations = append(p.violations, ev.violations(assayID, 0, now)...)
	}
	return p, true, nil
}

// baselineRuns is the number of accepted plates an auto baseline uses.
func baselineRuns(row *db.DriftChart) int {
	if row != nil && row.Runs > 0 {
		return row.Runs
	}
	return drift.DefaultBaselineRuns
}
