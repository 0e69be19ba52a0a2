package fit

import (
	"fmt"
	"strings"
)

// builtin is the one table of Sluice's models, built once and never
// changed. Adding a model is one file that builds its *Spec and one entry
// here; the parse error, the CLI help and the API document's enum follow.
// The first entry is the default.
var builtin = mustRegistry(hillSpec(), hill5Spec(), bellSpec())

// Builtin returns the registry of Sluice's models.
func Builtin() *Registry { return builtin }

// A Registry is a read-only list of models, in a stable order; the first is
// the default. The built-in one is Builtin(); a test may build its own with
// NewRegistry and pass it in Settings.Models.
type Registry struct {
	specs []*Spec
}

// NewRegistry returns a registry of the given models, in order. It checks
// each definition (names, roles, parameter count) and that no name repeats.
func NewRegistry(specs ...*Spec) (*Registry, error) {
	if len(specs) == 0 {
		return nil, fmt.Errorf("model registry: no models")
	}
	seen := map[Model]bool{}
	for _, s := range specs {
		if err := s.validate(); err != nil {
			return nil, fmt.Errorf("model registry: %w", err)
		}
		if seen[s.name] {
			return nil, fmt.Errorf("model registry: model %s twice", s.name)
		}
		seen[s.name] = true
	}
	return &Registry{specs: append([]*Spec(nil), specs...)}, nil
}

func mustRegistry(specs ...*Spec) *Registry {
	r, err := NewRegistry(specs...)
	if err != nil {
		panic(err)
	}
	return r
}

// Names returns the model names in order, as a new slice.
func (r *Registry) Names() []Model {
	out := make([]Model, len(r.specs))
	for i, s := range r.specs {
		out[i] = s.name
	}
	return out
}

// Default returns the model an empty name means: the first registered.
func (r *Registry) Default() Model { return r.specs[0].name }

// Lookup returns the named model's definition.
func (r *Registry) Lookup(m Model) (*Spec, bool) {
	for _, s := range r.specs {
		if s.name == m {
			return s, true
		}
	}
	return nil, false
}

// Parse returns the model with the given name; "" means Default. The error
// is a *ModelError listing the valid names.
func (r *Registry) Parse(s string) (Model, error) {
	if s == "" {
		return r.Default(), nil
	}
	if _, ok := r.Lookup(Model(s)); ok {
		return Model(s), nil
	}
	return "", &ModelError{Name: s, Valid: r.Names()}
}

// Help describes the models in one line each, "name  summary", in order:
// for a command's help text.
func (r *Registry) Help() string {
	width := 0
	for _, s := range r.specs {
		width = max(width, len(s.name))
	}
	lines := make([]string, len(r.specs))
	for i, s := range r.specs {
		lines[i] = fmt.Sprintf("%-*s  %s", width, s.name, s.summary)
	}
	return strings.Join(lines, "\n")
}

// ModelError says a model name is not registered.
type ModelError struct {
	Name  string
	Valid []Model // the registered names, in order
}

func (e *ModelError) Error() string {
	return fmt.Sprintf("unknown model %q (want %s)", e.Name, orList(e.Valid))
}

// Unwrap makes a ModelError an ErrInvalidInput.
func (e *ModelError) Unwrap() error { return ErrInvalidInput }

// orList joins names as "a, b or c".
func orList(names []Model) string {
	s := make([]string, len(names))
	for i, n := range names {
		s[i] = string(n)
	}
	if len(s) < 2 {
		return strings.Join(s, "")
	}
	return strings.Join(s[:len(s)-1], ", ") + " or " + s[len(s)-1]
}
