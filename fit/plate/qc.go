package plate

import (
	"fmt"
	"math"
)

// ZPrime is the screening window coefficient of Zhang, Chung & Oldenburg
// (1999, J Biomol Screen 4:67; FACTS §4):
//
//	Z′ = 1 − 3(σp + σn)/|μp − μn|
func ZPrime(meanP, sdP, meanN, sdN float64) float64 {
	return 1 - 3*(sdP+sdN)/math.Abs(meanP-meanN)
}

// SignalWindow is the AGM signal window with n replicates per well
// (FACTS §4 [M]):
//
//	SW = (|μmax − μmin| − 3(σmax + σmin)/√n) / (σmax/√n)
func SignalWindow(meanMax, sdMax, meanMin, sdMin float64, n int) float64 {
	rn := math.Sqrt(float64(n))
	return (math.Abs(meanMax-meanMin) - 3*(sdMax+sdMin)/rn) / (sdMax / rn)
}

// Thresholds decide pass or fail. A zero field means its default.
type Thresholds struct {
	// ZPrimeMin: Z′ below it fails. Zero means 0.5 (the "excellent"
	// boundary of Zhang et al. 1999, FACTS §4); range (−∞, 1).
	ZPrimeMin float64 `json:"z_prime_min,omitempty"`
	// SignalWindowMin: SW below it fails. Zero means 2 (AGM, FACTS §4 [M]).
	SignalWindowMin float64 `json:"signal_window_min,omitempty"`
	// CVMax: a max-control CV above it (percent) fails. Zero means 20
	// (AGM, for max and mid signals; FACTS §4 [M]).
	CVMax float64 `json:"cv_max,omitempty"`
	// EdgeMax: the outer ring's median differing from the inner wells' by
	// more than this fraction of the control window fails. Zero means 0.2
	// (common practice).
	EdgeMax float64 `json:"edge_max,omitempty"`
	// PatternMax: a row or column whose control-well median differs from
	// the plate's by more than this fraction of the window fails. Zero means
	// 0.25 (common practice).
	PatternMax float64 `json:"pattern_max,omitempty"`
}

func (t Thresholds) resolved() Thresholds {
	if t.ZPrimeMin == 0 {
		t.ZPrimeMin = 0.5
	}
	if t.SignalWindowMin == 0 {
		t.SignalWindowMin = 2
	}
	if t.CVMax == 0 {
		t.CVMax = 20
	}
	if t.EdgeMax == 0 {
		t.EdgeMax = 0.2
	}
	if t.PatternMax == 0 {
		t.PatternMax = 0.25
	}
	return t
}

// QC is a plate's quality. Figures may be non-finite: SignalBackground is
// +Inf when the min controls' mean is 0 (normal for background-subtracted
// data) and NaN when both means are 0; a CV is NaN when its mean is 0.
// The wire form (api/wire.PlateQC) encodes them as null.
type QC struct {
	ZPrime       float64 `json:"z_prime"`
	SignalWindow float64 `json:"signal_window"`
	// SignalBackground is μmax/μmin.
	SignalBackground float64            `json:"signal_background"`
	CV               map[string]float64 `json:"cv"`
	MeanMax, MeanMin float64            `json:"-"`
	EdgeShift        float64            `json:"edge_shift"` // (outer − inner median)/window
	WorstRow         float64            `json:"worst_row_shift"`
	WorstCol         float64            `json:"worst_column_shift"`
	Pass             bool               `json:"pass"`
	Reasons          []string           `json:"reasons"`
}

// Measured is one well's raw value with its place and role.
type Measured struct {
	Well  Well
	Role  Role
	Value float64
}

// Assess computes the plate's QC from its wells. It needs at least two
// max and two min controls.
func Assess(f Format, wells []Measured, th Thresholds) (*QC, error) {
	th = th.resolved()
	var maxs, mins []float64
	for _, w := range wells {
		switch w.Role {
		case MaxControl:
			maxs = append(maxs, w.Value)
		case MinControl:
			mins = append(mins, w.Value)
		}
	}
	if len(maxs) < 2 || len(mins) < 2 {
		return nil, fmt.Errorf("QC needs at least 2 max_control and 2 min_control wells (have %d and %d)", len(maxs), len(mins))
	}
	mMax, sMax := meanSD(maxs)
	mMin, sMin := meanSD(mins)
	q := &QC{MeanMax: mMax, MeanMin: mMin, CV: map[string]float64{"max_control": CV(maxs), "min_control": CV(mins)}}
	q.ZPrime = ZPrime(mMax, sMax, mMin, sMin)
	q.SignalWindow = SignalWindow(mMax, sMax, mMin, sMin, 1)
	q.SignalBackground = mMax / mMin
	window := math.Abs(mMax - mMin)
	// Edge and row/column patterns, read on the controls and on every
	// measured well normalised by role-free medians: use all non-empty wells
	// relative to their role's median so that the layout does not create a
	// pattern.
	roleMed := map[Role]float64{}
	byRole := map[Role][]float64{}
	for _, w := range wells {
		if w.Role != Empty && w.Role != Excluded {
			byRole[w.Role] = append(byRole[w.Role], w.Value)
		}
	}
	for r, xs := range byRole {
		roleMed[r] = median(xs)
	}
	var outer, inner []float64
	rows := make([][]float64, f.Rows)
	cols := make([][]float64, f.Cols)
	var all []float64
	for _, w := range wells {
		if w.Role != MaxControl && w.Role != MinControl && w.Role != Vehicle {
			continue // samples vary by design; controls and vehicle should not
		}
		d := (w.Value - roleMed[w.Role]) / window
		all = append(all, d)
		if f.Edge(w.Well) {
			outer = append(outer, d)
		} else {
			inner = append(inner, d)
		}
		rows[w.Well.Row] = append(rows[w.Well.Row], d)
		cols[w.Well.Col] = append(cols[w.Well.Col], d)
	}
	if len(outer) > 0 && len(inner) > 0 {
		q.EdgeShift = median(outer) - median(inner)
	}
	base := median(all)
	for _, r := range rows {
		if len(r) >= 2 {
			q.WorstRow = maxAbs(q.WorstRow, median(r)-base)
		}
	}
	for _, c := range cols {
		if len(c) >= 2 {
			q.WorstCol = maxAbs(q.WorstCol, median(c)-base)
		}
	}
	if !(q.ZPrime >= th.ZPrimeMin) {
		q.Reasons = append(q.Reasons, fmt.Sprintf("Z′ %.3f is below %.2f", q.ZPrime, th.ZPrimeMin))
	}
	if !(q.SignalWindow >= th.SignalWindowMin) {
		q.Reasons = append(q.Reasons, fmt.Sprintf("signal window %.2f is below %.2f", q.SignalWindow, th.SignalWindowMin))
	}
	// The CV limit applies to the max (and mid) signal, not to the
	// background, whose CV is large whenever its mean is small (AGM, FACTS
	// §4 [M]); the min control's CV is reported all the same.
	if cv := q.CV["max_control"]; !(math.Abs(cv) <= th.CVMax) {
		q.Reasons = append(q.Reasons, fmt.Sprintf("CV of max_control %.1f %% is above %.0f %%", cv, th.CVMax))
	}
	if math.Abs(q.EdgeShift) > th.EdgeMax {
		q.Reasons = append(q.Reasons, fmt.Sprintf("edge effect: outer wells differ from inner by %.0f %% of the window", 100*q.EdgeShift))
	}
	if q.WorstRow > th.PatternMax || q.WorstCol > th.PatternMax {
		q.Reasons = append(q.Reasons, fmt.Sprintf("row/column pattern: a row or column of controls is off by %.0f %% of the window",
			100*math.Max(q.WorstRow, q.WorstCol)))
	}
	q.Pass = len(q.Reasons) == 0
	if q.Reasons == nil {
		q.Reasons = []string{}
	}
	return q, nil
}

func maxAbs(a, b float64) float64 { return math.Max(a, math.Abs(b)) }

// Check reports the first threshold outside its range, naming its JSON
// field: z_prime_min in (−∞, 1) (Z′ ≤ 1 always, so 1 or more fails every
// plate), signal_window_min ≥ 0, cv_max ≥ 0, edge_max and pattern_max in
// [0, 1] (fractions of the control window); every one finite. Zero is the
// default, as in Thresholds.
func (t Thresholds) Check() (field string, err error) {
	for _, c := range []struct {
		field  string
		v      float64
		ok     bool
		wanted string
	}{
		{"z_prime_min", t.ZPrimeMin, t.ZPrimeMin < 1, "below 1"},
		{"signal_window_min", t.SignalWindowMin, t.SignalWindowMin >= 0, "≥ 0"},
		{"cv_max", t.CVMax, t.CVMax >= 0, "≥ 0 (percent)"},
		{"edge_max", t.EdgeMax, t.EdgeMax >= 0 && t.EdgeMax <= 1, "in [0, 1]"},
		{"pattern_max", t.PatternMax, t.PatternMax >= 0 && t.PatternMax <= 1, "in [0, 1]"},
	} {
		if !c.ok || math.IsInf(c.v, 0) || math.IsNaN(c.v) {
			return c.field, fmt.Errorf("%w: %s %g must be finite and %s", ErrInvalid, c.field, c.v, c.wanted)
		}
	}
	return "", nil
}
