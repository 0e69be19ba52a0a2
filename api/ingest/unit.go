// Package ingest reads the data users send Sluice — curve CSV files,
// concentration units — into fit's types, with errors that say where the
// input broke.
package ingest

import (
	"errors"
	"fmt"
	"strings"
)

// Unit is a concentration unit; its value is the factor to molar. The
// zero Unit, NoUnit, means that none was given: concentrations cannot be
// read without one (RequireUnit).
type Unit float64

// The concentration units (FACTS §8).
const (
	NoUnit     Unit = 0
	Molar      Unit = 1
	Millimolar Unit = 1e-3
	Micromolar Unit = 1e-6
	Nanomolar  Unit = 1e-9
	Picomolar  Unit = 1e-12
)

// ErrNoUnit: concentrations were sent without a unit. Sluice does not
// guess one: nanomolar numbers read as molar give an EC50 of "2.8 M".
var ErrNoUnit = errors.New("concentration unit missing")

// unitNames are the accepted spellings, compared without regard to case
// (a CSV header is read lower-cased): M, mM, uM, µM (micro sign U+00B5),
// μM (Greek mu U+03BC), nM, pM.
var unitNames = map[string]Unit{
	"m": Molar, "mm": Millimolar, "um": Micromolar, "µm": Micromolar, "μm": Micromolar,
	"nm": Nanomolar, "pm": Picomolar,
}

// ParseUnit reads a unit a client sent: M, mM, uM or µM (also μM), nM, pM.
// The empty string is NoUnit, which the caller refuses unless the file
// names its unit (RequireUnit); a stored record from before units were
// required reads its empty unit with StoredUnit.
func ParseUnit(s string) (Unit, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return NoUnit, nil
	}
	// Case matters outside a CSV header: "mM" is not "MM".
	switch s {
	case "M", "mM", "uM", "µM", "μM", "nM", "pM":
		return unitNames[strings.ToLower(s)], nil
	}
	return NoUnit, fmt.Errorf("unknown concentration unit %q (want M, mM, uM, nM or pM)", s)
}

// StoredUnit reads the unit of a stored request: as ParseUnit, but empty
// is molar, which is what Sluice assumed before a unit was required.
func StoredUnit(s string) (Unit, error) {
	u, err := ParseUnit(s)
	if err == nil && u == NoUnit {
		u = Molar
	}
	return u, err
}

// RequireUnit refuses NoUnit with an error that says how to give one;
// field names where the client gives it (conc_unit, --unit).
func RequireUnit(u Unit, field string) (Unit, error) {
	if u == NoUnit {
		return NoUnit, fmt.Errorf("%w: %s is required whenever concentrations are sent (M, mM, uM, nM or pM)", ErrNoUnit, field)
	}
	return u, nil
}

// String is the unit's canonical name ("" for NoUnit).
func (u Unit) String() string {
	switch u {
	case Molar:
		return "M"
	case Millimolar:
		return "mM"
	case Micromolar:
		return "uM"
	case Nanomolar:
		return "nM"
	case Picomolar:
		return "pM"
	}
	return ""
}

// ToMolar converts a concentration in this unit to molar.
func (u Unit) ToMolar(c float64) float64 { return c * float64(u) }

// headerUnit splits a lower-cased column name into its base and the unit
// it carries, if base is one of bases: "conc_nm", "conc (µm)", "conc[um]"
// and "conc" (no unit) all have base "conc".
func headerUnit(name string, bases ...string) (base string, u Unit, ok bool) {
	for _, b := range bases {
		rest, found := strings.CutPrefix(name, b)
		if !found {
			continue
		}
		if rest == "" {
			return b, NoUnit, true
		}
		rest = strings.TrimSpace(rest)
		switch {
		case strings.HasPrefix(rest, "_"):
			rest = rest[1:]
		case strings.HasPrefix(rest, "(") && strings.HasSuffix(rest, ")"):
			rest = rest[1 : len(rest)-1]
		case strings.HasPrefix(rest, "[") && strings.HasSuffix(rest, "]"):
			rest = rest[1 : len(rest)-1]
		default:
			continue
		}
		if u, known := unitNames[strings.TrimSpace(rest)]; known {
			return b, u, true
		}
	}
	return "", NoUnit, false
}

// fileUnit decides the unit of a file's concentration columns: the one
// given (flag or parameter; field names it) or the one the header names.
// Both may be given if they agree; neither is ErrNoUnit at the first
// concentration column. All concentration columns share one unit.
func fileUnit(given Unit, field string, hdr header) (Unit, error) {
	u, from := given, field
	for _, c := range hdr.concCols {
		hu := hdr.units[c]
		if hu == NoUnit {
			continue
		}
		if u != NoUnit && hu != u {
			return NoUnit, &ParseError{Line: 1, Column: hdr.col[c] + 1, Name: hdr.names[c], Err: fmt.Errorf(
				"%w: column %q is in %s, but %s says %s", ErrBadValue, hdr.names[c], hu, from, u)}
		}
		if u == NoUnit {
			u, from = hu, fmt.Sprintf("column %q", hdr.names[c])
		}
	}
	if u == NoUnit && len(hdr.concCols) > 0 {
		c := hdr.concCols[0]
		return NoUnit, &ParseError{Line: 1, Column: hdr.col[c] + 1, Name: hdr.names[c], Err: fmt.Errorf(
			"%w: give %s, or name the unit in the header (conc_nM, \"conc (µM)\")", ErrNoUnit, field)}
	}
	return u, nil
}
