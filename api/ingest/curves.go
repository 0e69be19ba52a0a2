package ingest

import (
	"errors"
	"fmt"
	"io"

	"sluice/fit"
	"sluice/fit/schild"
)

// ParseError is an error at a place in a CSV file, like encoding/csv's:
// Line counts from 1 (the header is line 1), Column from 1; Name is the
// column's header when known.
type ParseError struct {
	Line, Column int
	Name         string
	Err          error
}

func (e *ParseError) Error() string {
	switch {
	case e.Column > 0 && e.Name != "":
		return fmt.Sprintf("line %d, column %d (%s): %v", e.Line, e.Column, e.Name, e.Err)
	case e.Column > 0:
		return fmt.Sprintf("line %d, column %d: %v", e.Line, e.Column, e.Err)
	}
	return fmt.Sprintf("line %d: %v", e.Line, e.Err)
}

func (e *ParseError) Unwrap() error { return e.Err }

// Sentinel errors wrapped by ParseError.
var (
	ErrMissingColumn = errors.New("missing column")
	ErrNotNumber     = errors.New("not a number")
	ErrBadValue      = errors.New("invalid value")
	ErrNoData        = errors.New("no data rows")
	// ErrSyntax: the text is not CSV (RFC 4180 quoting), as
	// encoding/csv reports it.
	ErrSyntax = errors.New("malformed CSV")
)

// IsInputError reports whether err is one of the sentinels above: the
// client's fault, which the API answers with a 4xx (a test there checks
// each). Every error a reader returns for any input must be one.
func IsInputError(err error) bool {
	for _, s := range []error{ErrMissingColumn, ErrNotNumber, ErrBadValue, ErrNoData, ErrSyntax, ErrNoUnit} {
		if errors.Is(err, s) {
			return true
		}
	}
	return false
}

// MaxCurveRows bounds the rows of one curve file.
const MaxCurveRows = 1_000_000

// ReadCurves reads a curve CSV with a header row naming its columns, in any
// order: conc and response (required), weight and curve (optional; rows
// without a curve column form one curve named "1"). Concentrations are in
// unit, or in the unit the header names (conc_nM, "conc (µM)"); both may be
// given if they agree, and neither is ErrNoUnit (field names where the
// caller takes the unit, e.g. --unit). They are returned in molar; curves
// come back in order of first appearance.
// Blank lines are skipped. Every value is checked as fit would check it, so
// that an error names the line and column rather than a point index.
func ReadCurves(r io.Reader, unit Unit, field string) ([]fit.Curve, error) {
	var curves []fit.Curve
	index := map[string]int{}
	spec := rowSpec{required: []string{"conc", "response"}, conc: []string{"conc"}, maxRows: MaxCurveRows}
	setUnit := func(h header) (err error) {
		unit, err = fileUnit(unit, field, h)
		return err
	}
	err := eachRow(r, spec, setUnit, func(row csvRow) error {
		conc, err := row.nonNegative("conc", "concentration")
		if err != nil {
			return err
		}
		resp, _, err := row.number("response", true)
		if err != nil {
			return err
		}
		w, given, err := row.number("weight", false)
		if err != nil {
			return err
		}
		if w < 0 {
			_, c, _ := row.text("weight")
			return &ParseError{Line: row.line, Column: c, Name: "weight", Err: fmt.Errorf("%w: weight %g is negative", ErrBadValue, w)}
		}
		// An empty cell means no weight (1); an explicit 0 would count as
		// 1 too (fit.Point's zero value), so it is refused.
		if given && w == 0 {
			_, c, _ := row.text("weight")
			return &ParseError{Line: row.line, Column: c, Name: "weight", Err: fmt.Errorf("%w: weight 0 does not leave a point out; remove the row, or give a weight > 0", ErrBadValue)}
		}
		id := "1"
		if s, _, ok := row.text("curve"); ok {
			id = s
		}
		k, seen := index[id]
		if !seen {
			k = len(curves)
			index[id] = k
			curves = append(curves, fit.Curve{ID: id})
		}
		curves[k].Points = append(curves[k].Points, fit.Point{Conc: unit.ToMolar(conc), Response: resp, Weight: w})
		return nil
	})
	if err != nil {
		return nil, err
	}
	if len(curves) == 0 {
		return nil, &ParseError{Line: 2, Err: ErrNoData}
	}
	return curves, nil
}

// ReadSchildCSV reads a Schild dataset: columns antagonist_conc, conc and
// response (any order; concentrations in unit or in the one the header
// names, as ReadCurves), one curve per antagonist concentration, in order
// of first appearance.
func ReadSchildCSV(r io.Reader, unit Unit, field string) ([]schild.Curve, error) {
	var curves []schild.Curve
	index := map[float64]int{}
	spec := rowSpec{required: []string{"antagonist_conc", "conc", "response"}, conc: []string{"conc", "antagonist_conc"}, maxRows: MaxCurveRows}
	setUnit := func(h header) (err error) {
		unit, err = fileUnit(unit, field, h)
		return err
	}
	err := eachRow(r, spec, setUnit, func(row csvRow) error {
		b, err := row.nonNegative("antagonist_conc", "concentration")
		if err != nil {
			return err
		}
		a, err := row.nonNegative("conc", "concentration")
		if err != nil {
			return err
		}
		y, _, err := row.number("response", true)
		if err != nil {
			return err
		}
		b = unit.ToMolar(b)
		j, ok := index[b]
		if !ok {
			j = len(curves)
			index[b] = j
			curves = append(curves, schild.Curve{AntagonistConc: b})
		}
		curves[j].Points = append(curves[j].Points, fit.Point{Conc: unit.ToMolar(a), Response: y})
		return nil
	})
	if err != nil {
		return nil, err
	}
	if len(curves) == 0 {
		return nil, &ParseError{Line: 1, Err: ErrNoData}
	}
	return curves, nil
}
