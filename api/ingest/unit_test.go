package ingest

import (
	"errors"
	"strings"
	"testing"
)

// A file's concentrations need a unit: given by the caller, or named in
// the header; both must agree; neither is refused at the conc column.
func TestFileUnits(t *testing.T) {
	for _, c := range []struct {
		header string
		given  Unit
		want   Unit
	}{
		{"conc,response", Nanomolar, Nanomolar},
		{"conc_nM,response", NoUnit, Nanomolar},
		{"conc (µM),response", NoUnit, Micromolar},
		{"conc (μM),response", NoUnit, Micromolar},
		{"Conc_uM,response", NoUnit, Micromolar},
		{"conc [mM],response", NoUnit, Millimolar},
		{"conc_pM,response", Picomolar, Picomolar},
		{"conc_M,response", NoUnit, Molar},
	} {
		cs, err := ReadCurves(strings.NewReader(c.header+"\n2,1\n"), c.given, "--unit")
		if err != nil {
			t.Errorf("%q given %v: %v", c.header, c.given, err)
			continue
		}
		if got, want := cs[0].Points[0].Conc, c.want.ToMolar(2); got != want {
			t.Errorf("%q given %v: conc %g M, want %g", c.header, c.given, got, want)
		}
	}
	for _, c := range []struct {
		header   string
		given    Unit
		sentinel error
		col      int
		text     string
	}{
		{"response,conc", NoUnit, ErrNoUnit, 2, "give --unit, or name the unit in the header"},
		{"response,conc_nM", Micromolar, ErrBadValue, 2, `column "conc_nM" is in nM, but --unit says uM`},
		{"response,concentration", Nanomolar, ErrMissingColumn, 0, `"conc"`},
		{"response,conc_furlongs", Nanomolar, ErrMissingColumn, 0, `"conc"`},
	} {
		_, err := ReadCurves(strings.NewReader(c.header+"\n1,2\n"), c.given, "--unit")
		var pe *ParseError
		if !errors.As(err, &pe) || !errors.Is(err, c.sentinel) || pe.Line != 1 || pe.Column != c.col || !strings.Contains(err.Error(), c.text) {
			t.Errorf("%q given %v: %v; want %v at column %d saying %q", c.header, c.given, err, c.sentinel, c.col, c.text)
		}
		if !IsInputError(err) {
			t.Errorf("%q: %v is not an input error", c.header, err)
		}
	}
}

// A Schild file's two concentration columns share one unit.
func TestSchildUnits(t *testing.T) {
	cs, err := ReadSchildCSV(strings.NewReader("antagonist_conc_nM,conc_nM,response\n0,1,5\n10,1,2\n"), NoUnit, "--unit")
	if err != nil || len(cs) != 2 || cs[1].AntagonistConc != 1e-8 || cs[1].Points[0].Conc != 1e-9 {
		t.Fatalf("%+v, %v", cs, err)
	}
	if _, err := ReadSchildCSV(strings.NewReader("antagonist_conc_nM,conc_uM,response\n0,1,5\n"), NoUnit, "--unit"); !errors.Is(err, ErrBadValue) ||
		!strings.Contains(err.Error(), `column "antagonist_conc_nM" is in nM, but column "conc_uM" says uM`) {
		t.Errorf("mixed header units: %v", err)
	}
	if _, err := ReadSchildCSV(strings.NewReader("antagonist_conc,conc,response\n0,1,5\n"), NoUnit, "--unit"); !errors.Is(err, ErrNoUnit) {
		t.Errorf("no unit: %v", err)
	}
}

// The plate CSV refuses a missing conc column as the curve reader does
// (a column named "concentration" once gave a plate of too_few_points
// curves), and reads its unit from the header.
func TestPlateCSVUnits(t *testing.T) {
	_, _, err := ReadPlateCSV(strings.NewReader("well,role,compound_id,concentration,value\nA1,sample,X,1,2\n"), Nanomolar, "conc_unit")
	var pe *ParseError
	if !errors.As(err, &pe) || !errors.Is(err, ErrMissingColumn) || pe.Line != 1 || !strings.Contains(err.Error(), `"conc"`) {
		t.Errorf("concentration column: %v", err)
	}
	ws, u, err := ReadPlateCSV(strings.NewReader("well,role,compound_id,conc (nM),value\nA1,sample,X,3,2\n"), NoUnit, "conc_unit")
	if err != nil || u != Nanomolar || ws[0].Conc != 3 || !ws[0].HasConc {
		t.Errorf("header unit: %+v %v %v", ws, u, err)
	}
	if _, _, err := ReadPlateCSV(strings.NewReader("well,role,compound_id,conc,value\nA1,sample,X,3,2\n"), NoUnit, "conc_unit"); !errors.Is(err, ErrNoUnit) ||
		!strings.Contains(err.Error(), "conc_unit") {
		t.Errorf("no unit: %v", err)
	}
}

func TestStoredUnit(t *testing.T) {
	if u, err := StoredUnit(""); err != nil || u != Molar {
		t.Errorf("StoredUnit(\"\") = %v, %v; want M", u, err)
	}
	if u, err := StoredUnit("nM"); err != nil || u != Nanomolar {
		t.Errorf("StoredUnit(nM) = %v, %v", u, err)
	}
	if _, err := RequireUnit(NoUnit, "conc_unit"); !errors.Is(err, ErrNoUnit) || !strings.Contains(err.Error(), "conc_unit is required") {
		t.Errorf("RequireUnit: %v", err)
	}
}
