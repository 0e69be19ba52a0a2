package fit

import (
	"math"
	"sort"

	"sluice/fit/lm"
)

// Settings control a fit. A nil *Settings, and any zero field, means the
// documented default.
type Settings struct {
	// Model is the curve family; "" means the registry's default, Hill.
	Model Model
	// Models is the registry Model is looked up in; nil means Builtin().
	Models *Registry
	// Fixed holds parameters by name at the given values: the
	// three-parameter variants are {"hill": 1}, {"bottom": 0},
	// {"top": 100}, and any combination. Nil means none.
	Fixed map[string]float64
	// Confidence is the level of every interval. Zero means 0.95; range (0, 1).
	Confidence float64
	// MaxHill bounds the magnitude of the slope parameters (Spec.Slopes:
	// hill, and Bell's hill_block). A
	// curve whose whole rise falls between two tested concentrations has no
	// identifiable slope and would otherwise run away; such a fit ends at
	// the bound and is flagged hill_at_bound. Zero means 10; range (0, 1000].
	MaxHill float64
	// PotencyMargin bounds the potency parameters (log_ec50, and Bell's
	// log_ic50) to the tested range
	// widened by this many decades on each side, so that a curve with no
	// response cannot send its potency to infinity. Zero means 3; range (0, 20].
	PotencyMargin float64
	// ActivityAlpha is the level of the extra-sum-of-squares F test of the
	// model against a flat line that calls a curve active (activity.go):
	// a curve whose P is not below it is inactive. Zero means 0.01; range
	// (0, 0.5].
	ActivityAlpha float64
	// Window is the assay window in response units: the span between the
	// assay's zero-effect and full-effect controls (100 for data
	// normalised to percent of control). Zero means unknown, and then no
	// minimum effect applies; range [0, +Inf).
	Window float64
	// MinEffect is the smallest effect, as a fraction of Window, that an
	// active curve must show in its own data (Result.Effect): a curve
	// that passes the F test with a smaller effect is inactive. It applies
	// only when Window is set. Zero means 0.2 (a 20 % effect, a common
	// screening threshold); range (0, 1].
	MinEffect float64
	// Solver tunes the least-squares solver; nil means fit/lm's defaults.
	Solver *lm.Settings
}

// Defaults for Settings.
const (
	DefaultConfidence    = 0.95
	DefaultMaxHill       = 10
	DefaultPotencyMargin = 3
	DefaultActivityAlpha = 0.01
	DefaultMinEffect     = 0.2
)

// resolved is Settings with defaults applied and names mapped to indices.
type resolved struct {
	model      Model
	curve      *Spec
	fixed      []bool
	fixedValue []float64
	confidence float64
	maxHill    float64
	margin     float64
	alpha      float64 // ActivityAlpha
	window     float64 // Window, 0 when unknown
	minEffect  float64 // MinEffect
	solver     *lm.Settings
}

func (s *Settings) resolve() (*resolved, error) {
	var in Settings
	if s != nil {
		in = *s
	}
	reg := in.Models
	if reg == nil {
		reg = builtin
	}
	m, err := reg.Parse(string(in.Model))
	if err != nil {
		return nil, &SettingError{"model", err}
	}
	spec, _ := reg.Lookup(m)
	r := &resolved{model: m, curve: spec, confidence: in.Confidence, maxHill: in.MaxHill,
		margin: in.PotencyMargin, alpha: in.ActivityAlpha, window: in.Window, minEffect: in.MinEffect, solver: in.Solver}
	if r.confidence == 0 {
		r.confidence = DefaultConfidence
	}
	if !(r.confidence > 0 && r.confidence < 1) {
		return nil, &SettingError{"confidence", invalid("%g is outside (0, 1)", in.Confidence)}
	}
	if r.maxHill == 0 {
		r.maxHill = DefaultMaxHill
	}
	if !(r.maxHill > 0 && r.maxHill <= 1000) {
		return nil, &SettingError{"max_hill", invalid("%g is outside (0, 1000]", in.MaxHill)}
	}
	if r.margin == 0 {
		r.margin = DefaultPotencyMargin
	}
	if !(r.margin > 0 && r.margin <= 20) {
		return nil, &SettingError{"potency_margin", invalid("%g is outside (0, 20]", in.PotencyMargin)}
	}
	if r.alpha == 0 {
		r.alpha = DefaultActivityAlpha
	}
	if !(r.alpha > 0 && r.alpha <= 0.5) {
		return nil, &SettingError{"activity_alpha", invalid("%g is outside (0, 0.5]", in.ActivityAlpha)}
	}
	if !(r.window >= 0) || math.IsInf(r.window, 1) {
		return nil, &SettingError{"window", invalid("%g is not a finite number ≥ 0", in.Window)}
	}
	if r.minEffect == 0 {
		r.minEffect = DefaultMinEffect
	}
	if !(r.minEffect > 0 && r.minEffect <= 1) {
		return nil, &SettingError{"min_effect", invalid("%g is outside (0, 1]", in.MinEffect)}
	}
	names := r.curve.names()
	r.fixed = make([]bool, len(names))
	r.fixedValue = make([]float64, len(names))
	keys := make([]string, 0, len(in.Fixed))
	for k := range in.Fixed {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		v := in.Fixed[k]
		j := indexOf(names, k)
		if j < 0 {
			return nil, &SettingError{"fixed." + k, invalid("model %s has no parameter %q (it has %v)", m, k, names)}
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, &SettingError{"fixed." + k, invalid("value is not a finite number")}
		}
		r.fixed[j], r.fixedValue[j] = true, v
	}
	return r, nil
}

func indexOf(names []string, s string) int {
	for i, n := range names {
		if n == s {
			return i
		}
	}
	return -1
}

// freeCount returns the number of parameters not fixed.
func (r *resolved) freeCount() int {
	k := 0
	for _, f := range r.fixed {
		if !f {
			k++
		}
	}
	return k
}

// bounds writes the box of each parameter given the design: each
// parameter's default bound (bound.go) for the tested range.
func (r *resolved) bounds(d *design, lower, upper []float64) {
	lo, hi, ok := d.finiteRange()
	if !ok {
		lo, hi = 0, 0
	}
	for j, p := range r.curve.params {
		lower[j], upper[j] = p.box(lo, hi, r.margin, r.maxHill)
	}
}

// Validate checks the settings without fitting anything; the error is a
// *SettingError naming the field.
func (s *Settings) Validate() error {
	_, err := s.resolve()
	return err
}
