package drift

// Mode says how 1-2s relates to the other Westgard rules.
type Mode string

// The modes (see the package documentation).
const (
	// ModeWarning (also the zero value ""): 1-2s is a warning only and
	// every rule is checked at every point. Modern practice; the default.
	ModeWarning Mode = "warning"
	// ModeTrigger: the 1981 scheme. The rejection rules are checked only
	// at a point beyond ±2 SD; a point within is accepted whatever the
	// points before it show.
	ModeTrigger Mode = "trigger"
)

// Defaults of Settings.
const (
	DefaultEWMALambda = 0.2
	DefaultEWMAL      = 3.0
	DefaultCUSUMK     = 0.5
	DefaultCUSUMH     = 5.0
)

// Settings are the tunables of Evaluate. A nil *Settings, and any zero
// field, means the documented default.
type Settings struct {
	// Mode is ModeWarning or ModeTrigger. Empty means ModeWarning.
	Mode Mode
	// Rules are the rules reported. Zero means AllRules. A rule left out
	// is neither reported nor counted in the status (in ModeTrigger the
	// ±2 SD trigger works whether or not 1-2s is reported).
	Rules RuleSet
	// EWMALambda is the EWMA's weight λ of the newest value. Zero means
	// 0.2; range (0, 1] (1 makes it a Shewhart chart of single values).
	EWMALambda float64
	// EWMAL is the width of the EWMA limits in asymptotic SDs of the EWMA.
	// Zero means 3; range > 0.
	EWMAL float64
	// CUSUMK is the CUSUM's reference value k in SD units, usually half
	// the shift to detect. Zero means 0.5; range > 0.
	CUSUMK float64
	// CUSUMH is the CUSUM's decision interval h in SD units. Zero means
	// 5; range > 0.
	CUSUMH float64
}

// Resolve returns the settings with defaults filled in, or an error naming
// the first unusable field ("mode", "rules", "ewma_lambda", "ewma_l",
// "cusum_k", "cusum_h").
func (s *Settings) Resolve() (Settings, error) {
	var r Settings
	if s != nil {
		r = *s
	}
	switch r.Mode {
	case "":
		r.Mode = ModeWarning
	case ModeWarning, ModeTrigger:
	default:
		return r, fieldErr("mode", "must be %q or %q, got %q", ModeWarning, ModeTrigger, r.Mode)
	}
	if r.Rules&^AllRules != 0 {
		return r, fieldErr("rules", "unknown rule bits %#x", uint16(r.Rules&^AllRules))
	}
	if r.Rules == 0 {
		r.Rules = AllRules
	}
	if r.EWMALambda == 0 {
		r.EWMALambda = DefaultEWMALambda
	}
	if !(r.EWMALambda > 0 && r.EWMALambda <= 1) {
		return r, fieldErr("ewma_lambda", "must be in (0, 1], got %v", r.EWMALambda)
	}
	for _, p := range []struct {
		field string
		v     *float64
		def   float64
	}{{"ewma_l", &r.EWMAL, DefaultEWMAL}, {"cusum_k", &r.CUSUMK, DefaultCUSUMK}, {"cusum_h", &r.CUSUMH, DefaultCUSUMH}} {
		if *p.v == 0 {
			*p.v = p.def
		}
		if !(*p.v > 0) || !finite(*p.v) {
			return r, fieldErr(p.field, "must be finite and > 0, got %v", *p.v)
		}
	}
	return r, nil
}
