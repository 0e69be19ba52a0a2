package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// Model names a curve family. Its definition (a *Spec) lives in a Registry:
// the built-in models are in Builtin(), and Settings.Models may name
// another registry.
type Model string

// The built-in models; each is defined in its own file (hill.go, hill5.go,
// bell.go) and listed once in registry.go.
const (
	// Hill is the four-parameter Hill (logistic) equation (hill.go).
	Hill Model = "hill"
	// Hill5 is the asymmetric five-parameter logistic (hill5.go).
	Hill5 Model = "hill5"
	// Bell is activation times block, a bell-shaped curve (bell.go).
	Bell Model = "bell"
)

// ParseModel returns the built-in model with the given name; "" means the
// default, Hill. The error is a *ModelError listing the valid names.
func ParseModel(s string) (Model, error) { return builtin.Parse(s) }

// Spec returns the model's definition in Builtin(). It panics for a name
// that is not registered there, a programmer error: names from outside
// pass through ParseModel first.
func (m Model) Spec() *Spec {
	s, ok := builtin.Lookup(m)
	if !ok {
		panic("fit: unknown model " + string(m))
	}
	return s
}

// Params returns the model's parameter names in order, as a new slice.
func (m Model) Params() []string { return m.Spec().Params() }

// Roles returns where the shared parameters sit in the model's parameters.
func (m Model) Roles() Roles { return m.Spec().roles }

// Monotone reports whether every curve of the model is monotone in
// concentration (see Spec.Monotone).
func (m Model) Monotone() bool { return m.Spec().monotone }

// Value returns the model's response at concentration conc (molar) for the
// parameters theta, in the order of Params.
func (m Model) Value(theta []float64, conc float64) float64 { return m.Spec().Value(theta, conc) }

// ValueGrad returns the response at conc (molar) and writes its gradient
// with respect to theta into grad (len(Params)).
func (m Model) ValueGrad(theta []float64, conc float64, grad []float64) float64 {
	return m.Spec().ValueGrad(theta, conc, grad)
}

// Bottom, Top, LogEC50 and HillSlope read the shared parameters out of
// theta (in the order of Params).
func (m Model) Bottom(theta []float64) float64 { return theta[m.Spec().roles.Bottom] }

// Top is the upper plateau parameter (see Bottom).
func (m Model) Top(theta []float64) float64 { return theta[m.Spec().roles.Top] }

// LogEC50 is the potency parameter, log10(EC50/M) (see Bottom).
func (m Model) LogEC50(theta []float64) float64 { return theta[m.Spec().roles.LogEC50] }

// HillSlope is the slope parameter of the rise (see Bottom).
func (m Model) HillSlope(theta []float64) float64 { return theta[m.Spec().roles.Hill] }

// Roles gives the index, in a model's parameters, of each parameter that
// every Sluice model shares: all of them run from a zero-concentration
// plateau towards another with a potency and a slope. Code outside a
// model's own file reads parameters through these (or through Result's
// accessors), never by number.
type Roles struct {
	// Bottom and Top are the lower and upper plateaus of the window
	// (bottom < top in a fit of a model with a twin, such as Hill).
	Bottom, Top int
	// LogEC50 is log10 of the potency in molar.
	LogEC50 int
	// Hill is the slope of the rise: > 0 rises with concentration.
	Hill int
}

// A Spec defines one curve family: everything the fitter, the flags and the
// service need to know about it. A model's file builds its Spec (hill.go:
// hillSpec) and registry.go lists it; nothing else in the package names a
// model. A Spec is read-only once registered.
type Spec struct {
	name       Model
	summary    string
	params     []param
	paramNames []string // the params' names, shared read-only inside the package
	roles      Roles
	// monotone: every curve of the family is monotone in concentration,
	// so the far plateau of the fitted window can be checked
	// (top_not_reached / bottom_not_reached).
	monotone bool
	// twin: (bottom, top, hill) and (top, bottom, −hill) are the same
	// curve, and the fitter reports the twin with bottom < top.
	twin bool
	// curve is f(x; θ) on x = log10(conc/M), x = −Inf for the vehicle;
	// when grad is not nil it also writes ∂f/∂θⱼ.
	curve func(theta []float64, x float64, grad []float64) float64
	// starts returns starting values from the data, best first (selfstart.go).
	starts func(set *resolved, d *design) [][]float64
	// logECF is log10 EC_F, nil when the model has none (see Spec.LogECF).
	logECF func(theta []float64, F float64) float64
	// admissible, when not nil, says whether a parameter vector inside
	// the box is a curve of the family as the model means it (Bell: a
	// peak, activation before block). The box cannot say it; the
	// search (search.go) prefers any admissible solution to one that is
	// not, and a result the model does not admit (when nothing else was
	// found) is flagged FlagShapeNotAdmitted.
	admissible func(theta []float64) bool
}

// admits reports whether theta is a curve of the family as the model
// means it (every finite vector when the model sets no admissible).
func (s *Spec) admits(theta []float64) bool {
	for _, v := range theta {
		if math.IsNaN(v) {
			return false
		}
	}
	return s.admissible == nil || s.admissible(theta)
}

// Name returns the model's name.
func (s *Spec) Name() Model { return s.name }

// Summary returns one line that says what the model is for (help texts and
// the API document).
func (s *Spec) Summary() string { return s.summary }

// Params returns the parameter names in order, as a new slice: a caller may
// change it without changing the model.
func (s *Spec) Params() []string { return slices.Clone(s.paramNames) }

// Roles returns where the shared parameters sit.
func (s *Spec) Roles() Roles { return s.roles }

// Monotone reports whether every curve of the model is monotone in
// concentration (false for Bell, which rises and falls).
func (s *Spec) Monotone() bool { return s.monotone }

// Slopes returns the indices of the slope parameters: those bounded by
// Settings.MaxHill, whose stop at the bound flags hill_at_bound.
func (s *Spec) Slopes() []int {
	var out []int
	for j, p := range s.params {
		if p.isSlope() {
			out = append(out, j)
		}
	}
	return out
}

// Value returns the response at concentration conc (molar) for theta.
func (s *Spec) Value(theta []float64, conc float64) float64 {
	return s.curve(theta, log10Conc(conc), nil)
}

// ValueGrad returns the response at conc (molar) and writes its gradient
// with respect to theta into grad (len(Params)).
func (s *Spec) ValueGrad(theta []float64, conc float64, grad []float64) float64 {
	return s.curve(theta, log10Conc(conc), grad)
}

// LogECF returns log10 of EC_F, the concentration (molar) at which the
// curve has gone F % of the way from its zero-concentration plateau
// towards the other end of its window, 0 < F < 100; each model's file
// says what the window is and how EC_F is found. It returns NaN for F
// outside (0, 100) and for a model that defines none.
func (s *Spec) LogECF(theta []float64, F float64) float64 {
	if !(F > 0 && F < 100) || s.logECF == nil {
		return math.NaN()
	}
	return s.logECF(theta, F)
}

// value is f on x = log10(conc/M), for the fitter.
func (s *Spec) value(theta []float64, x float64, grad []float64) float64 {
	return s.curve(theta, x, grad)
}

// names returns the parameter names without copying; the package never
// changes them.
func (s *Spec) names() []string { return s.paramNames }

// isSlope reports whether parameter j is a slope parameter.
func (s *Spec) isSlope(j int) bool { return s.params[j].isSlope() }

// validate checks a Spec before it is registered.
func (s *Spec) validate() error {
	np := len(s.params)
	switch {
	case s.name == "":
		return errors.New("a model has no name")
	case np == 0 || np > maxParams:
		return fmt.Errorf("model %s: %d parameters, want 1 to %d", s.name, np, maxParams)
	case s.curve == nil || s.starts == nil:
		return fmt.Errorf("model %s: no curve or no starting values", s.name)
	case len(s.paramNames) != np:
		return fmt.Errorf("model %s: not built by newSpec", s.name)
	}
	seen := map[string]bool{}
	for j, p := range s.params {
		if p.name == "" || seen[p.name] {
			return fmt.Errorf("model %s: parameter %d has an empty or repeated name %q", s.name, j, p.name)
		}
		seen[p.name] = true
	}
	r := s.roles
	idx := []int{r.Bottom, r.Top, r.LogEC50, r.Hill}
	for _, j := range idx {
		if j < 0 || j >= np {
			return fmt.Errorf("model %s: role index %d outside its %d parameters", s.name, j, np)
		}
	}
	if len(idx) != len(map[int]bool{r.Bottom: true, r.Top: true, r.LogEC50: true, r.Hill: true}) {
		return fmt.Errorf("model %s: two roles share a parameter", s.name)
	}
	return nil
}

// newSpec fills in the names of the parameters.
func newSpec(s Spec) *Spec {
	s.paramNames = make([]string, len(s.params))
	for j, p := range s.params {
		s.paramNames[j] = p.name
	}
	return &s
}

// maxParams is the largest number of parameters of any model.
const maxParams = 6

const ln10 = math.Ln10

// log10Conc maps a molar concentration to x, with 0 ↦ −Inf.
func log10Conc(c float64) float64 {
	if c == 0 {
		return math.Inf(-1)
	}
	return math.Log10(c)
}
