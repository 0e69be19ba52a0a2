package plate

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"unicode"
	"unicode/utf8"
)

// WellInput is one well as submitted, before it is checked: the well name
// and role as written, concentrations already in molar. The Has fields say
// whether a number was given at all (a blank CSV cell or an absent JSON
// member is not the same as 0).
type WellInput struct {
	Well           string
	Role           string
	CompoundID     string
	Conc           float64
	HasConc        bool
	Value          float64
	HasValue       bool
	AntagonistID   string
	AntagonistConc float64
}

// CheckedWell is a well that passed Validate: its place on the plate, its
// canonical name and its role.
type CheckedWell struct {
	Name string // canonical, e.g. "A01"
	PlateWell
	HasValue bool
}

// Use says what the wells are for.
type Use int

const (
	// ForPlate: a measured plate. Every well whose role is read needs a
	// value, and the plate needs its controls.
	ForPlate Use = iota
	// ForLayout: a plate map reused by reader grids. Values come from the
	// grid, so a layout holds none; the controls must be mapped.
	ForLayout
)

// MinControls is how many max_control and how many min_control wells a
// plate needs: Z′ and normalisation use their means and standard
// deviations, which need two wells each.
const MinControls = 2

// MaxErrors bounds the well errors Validate reports.
const MaxErrors = 20

// Sentinels of the plate rules; a *WellError wraps one of them and
// ErrInvalid.
var (
	// ErrInvalid is the category of every error Validate returns.
	ErrInvalid = errors.New("invalid plate")

	ErrWellName   = errors.New("not a well of this plate")
	ErrDuplicate  = errors.New("well given twice")
	ErrRole       = errors.New("unknown role")
	ErrMissing    = errors.New("required field missing")
	ErrNotAllowed = errors.New("field not allowed here")
	ErrConc       = errors.New("concentration must be finite and ≥ 0")
	ErrValue      = errors.New("value must be finite")
	ErrText       = errors.New("identifier must be printable UTF-8")
	ErrAntagonist = errors.New("antagonist_conc without antagonist_id")
	ErrControls   = errors.New("too few control wells")
	ErrWellCount  = errors.New("wrong number of wells")
)

// WellError is one broken rule: the entry of the submitted well list
// (Index, 0-based; -1 when the rule concerns the plate as a whole), the
// well's canonical name when it has one, and the field at fault ("well",
// "role", "compound_id", "conc", "value", "antagonist_id",
// "antagonist_conc", or "wells" for the whole list).
type WellError struct {
	Index  int
	Well   string
	Field  string
	Err    error // one of the sentinels above
	Detail string
}

func (e *WellError) Error() string {
	if e.Index < 0 {
		return fmt.Sprintf("%s: %s", e.Field, e.Detail)
	}
	return fmt.Sprintf("wells[%d].%s: %s", e.Index, e.Field, e.Detail)
}

// Unwrap gives the rule's sentinel and ErrInvalid.
func (e *WellError) Unwrap() []error { return []error{ErrInvalid, e.Err} }

// Invalid lists what is wrong with a plate's wells, in the order of the
// submitted list, at most MaxErrors of them.
type Invalid []*WellError

func (v Invalid) Error() string {
	msgs := make([]string, len(v))
	for i, e := range v {
		msgs[i] = e.Error()
	}
	return strings.Join(msgs, "; ")
}

// Unwrap gives each *WellError, so errors.As finds the first and
// errors.Is(err, ErrInvalid) holds.
func (v Invalid) Unwrap() []error {
	out := make([]error, len(v))
	for i, e := range v {
		out[i] = e
	}
	return out
}

// Validate checks submitted wells against a plate format and the rules of
// their roles, and returns them placed on the plate, in the submitted
// order. The rules:
//
//   - at least one well and no more than the format holds;
//   - every well name lies on the plate ("A1", "A01" and "a01" are the
//     same well), and no well is given twice;
//   - the role is one of the known roles;
//   - sample and reference wells name a compound_id and a concentration;
//   - compound_id and antagonist_id are printable UTF-8 (no control
//     characters), at most MaxIDLen bytes;
//   - every well whose role is read (all but empty and excluded) has a
//     value on a plate, and no well has a value in a layout;
//   - concentrations are finite and ≥ 0, values finite;
//   - an antagonist_conc comes with an antagonist_id;
//   - at least MinControls max_control and MinControls min_control wells.
//
// A failure is an Invalid listing every broken rule (at most MaxErrors),
// each a *WellError naming the entry, the well and the field.
func Validate(f Format, wells []WellInput, use Use) ([]CheckedWell, error) {
	var errs Invalid
	add := func(i int, well, field string, sentinel error, format string, a ...any) {
		if len(errs) < MaxErrors {
			errs = append(errs, &WellError{Index: i, Well: well, Field: field, Err: sentinel, Detail: fmt.Sprintf(format, a...)})
		}
	}
	if len(wells) == 0 {
		add(-1, "", "wells", ErrWellCount, "a plate needs wells")
		return nil, errs
	}
	if len(wells) > f.Wells {
		add(-1, "", "wells", ErrWellCount, "%d wells on a %d-well plate", len(wells), f.Wells)
		return nil, errs
	}
	seen := make(map[Well]int, len(wells))
	out := make([]CheckedWell, 0, len(wells))
	var nMax, nMin int
	for i, in := range wells {
		pos, err := f.ParseWell(in.Well)
		if err != nil {
			add(i, "", "well", ErrWellName, "%v", err)
			continue
		}
		name := f.Name(pos)
		if j, dup := seen[pos]; dup {
			add(i, name, "well", ErrDuplicate, "well %s appears twice (also entry %d)", name, j)
			continue
		}
		seen[pos] = i
		role, err := ParseRole(in.Role)
		if err != nil {
			add(i, name, "role", ErrRole, "%v", err)
			continue
		}
		read := role != Empty && role != Excluded
		switch {
		case use == ForPlate && read && !in.HasValue:
			add(i, name, "value", ErrMissing, "well %s (%s) needs a value", name, role)
		case use == ForLayout && in.HasValue:
			add(i, name, "value", ErrNotAllowed, "well %s: a layout holds no values; they come from the grid", name)
		case in.HasValue && (math.IsNaN(in.Value) || math.IsInf(in.Value, 0)):
			add(i, name, "value", ErrValue, "well %s: value %v is not a finite number", name, in.Value)
		}
		if role == Sample || role == Reference {
			if in.CompoundID == "" {
				add(i, name, "compound_id", ErrMissing, "well %s: a %s well needs a compound_id", name, role)
			}
			if !in.HasConc {
				add(i, name, "conc", ErrMissing, "well %s: a %s well needs a concentration", name, role)
			}
		}
		for _, id := range []struct{ field, text string }{{"compound_id", in.CompoundID}, {"antagonist_id", in.AntagonistID}} {
			if !PrintableID(id.text) {
				add(i, name, id.field, ErrText, "well %s: %s must be printable UTF-8 without control characters, at most %d bytes", name, id.field, MaxIDLen)
			}
		}
		if !validConc(in.Conc) {
			add(i, name, "conc", ErrConc, "well %s: concentration %v is not finite and ≥ 0", name, in.Conc)
		}
		if !validConc(in.AntagonistConc) {
			add(i, name, "antagonist_conc", ErrConc, "well %s: antagonist concentration %v is not finite and ≥ 0", name, in.AntagonistConc)
		}
		if in.AntagonistID == "" && in.AntagonistConc != 0 {
			add(i, name, "antagonist_id", ErrAntagonist, "well %s: antagonist_conc without antagonist_id", name)
		}
		switch role {
		case MaxControl:
			nMax++
		case MinControl:
			nMin++
		}
		out = append(out, CheckedWell{Name: name, HasValue: in.HasValue, PlateWell: PlateWell{Well: pos, Role: role,
			CompoundID: in.CompoundID, Conc: in.Conc, Value: in.Value, AntagonistID: in.AntagonistID, AntagonistConc: in.AntagonistConc}})
	}
	if len(errs) == 0 && (nMax < MinControls || nMin < MinControls) {
		add(-1, "", "wells", ErrControls, "QC and normalisation need at least %d max_control and %d min_control wells (have %d and %d)",
			MinControls, MinControls, nMax, nMin)
	}
	if len(errs) > 0 {
		return nil, errs
	}
	return out, nil
}

// MaxIDLen bounds a compound or antagonist ID on a plate.
const MaxIDLen = 200

// PrintableID reports whether s is valid UTF-8 of at most MaxIDLen bytes
// without control characters (which no identifier needs, and which
// PostgreSQL text refuses in the case of NUL).
func PrintableID(s string) bool {
	if len(s) > MaxIDLen || !utf8.ValidString(s) {
		return false
	}
	for _, r := range s {
		if unicode.IsControl(r) {
			return false
		}
	}
	return true
}

func validConc(c float64) bool { return c >= 0 && !math.IsInf(c, 1) }

// Read returns the wells whose role is read into QC and curves (all but
// empty and excluded), as the curve and QC code takes them.
func Read(wells []CheckedWell) []PlateWell {
	out := make([]PlateWell, 0, len(wells))
	for _, w := range wells {
		if w.Role != Empty && w.Role != Excluded && w.HasValue {
			out = append(out, w.PlateWell)
		}
	}
	return out
}
