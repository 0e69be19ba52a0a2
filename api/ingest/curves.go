package ingest

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

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
)

// MaxCurveRows bounds the rows of one curve file.
const MaxCurveRows = 1_000_000

// ReadCurves reads a curve CSV with a header row naming its columns, in any
// order: conc and response (required), weight and curve (optional; rows
// without a curve column form one curve named "1"). Concentrations are in
// unit and returned in molar; curves come back in order of first appearance.
// Blank lines are skipped. Every value is checked as fit would check it, so
// that an error names the line and column rather than a point index.
func ReadCurves(r io.Reader, unit Unit) ([]fit.Curve, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, &ParseError{Line: 1, Err: ErrNoData}
	}
	if err != nil {
		return nil, csvError(err)
	}
	col, err := columns(header, "conc", "response")
	if err != nil {
		return nil, err
	}
	var curves []fit.Curve
	index := map[string]int{}
	rows := 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, csvError(err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		if rows++; rows > MaxCurveRows {
			return nil, &ParseError{Line: line, Err: fmt.Errorf("%w: more than %d rows", ErrBadValue, MaxCurveRows)}
		}
		field := func(name string) (string, int, bool) {
			i, ok := col[name]
			if !ok || i >= len(rec) {
				return "", i + 1, false
			}
			return strings.TrimSpace(rec[i]), i + 1, true
		}
		num := func(name string, required bool) (float64, bool, error) {
			s, c, ok := field(name)
			if !ok || s == "" {
				if required {
					return 0, false, &ParseError{Line: line, Column: c, Name: name, Err: fmt.Errorf("%w: value is empty", ErrBadValue)}
				}
				return 0, false, nil
			}
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, false, &ParseError{Line: line, Column: c, Name: name, Err: fmt.Errorf("%w: %q", ErrNotNumber, s)}
			}
			return v, true, nil
		}
		conc, _, err := num("conc", true)
		if err != nil {
			return nil, err
		}
		if conc < 0 {
			_, c, _ := field("conc")
			return nil, &ParseError{Line: line, Column: c, Name: "conc", Err: fmt.Errorf("%w: concentration %g is negative", ErrBadValue, conc)}
		}
		resp, _, err := num("response", true)
		if err != nil {
			return nil, err
		}
		w, _, err := num("weight", false)
		if err != nil {
			return nil, err
		}
		if w < 0 {
			_, c, _ := field("weight")
			return nil, &ParseError{Line: line, Column: c, Name: "weight", Err: fmt.Errorf("%w: weight %g is negative", ErrBadValue, w)}
		}
		id := "1"
		if s, _, ok := field("curve"); ok {
			id = s
		}
		k, seen := index[id]
		if !seen {
			k = len(curves)
			index[id] = k
			curves = append(curves, fit.Curve{ID: id})
		}
		curves[k].Points = append(curves[k].Points, fit.Point{Conc: unit.ToMolar(conc), Response: resp, Weight: w})
	}
	if len(curves) == 0 {
		return nil, &ParseError{Line: 2, Err: ErrNoData}
	}
	return curves, nil
}

// columns maps a header's column names (trimmed, lower-case, without a
// byte-order mark) to their index, refusing a name given twice and
// requiring the named columns.
func columns(header []string, required ...string) (map[string]int, error) {
	col := map[string]int{}
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		if _, dup := col[name]; dup && name != "" {
			return nil, &ParseError{Line: 1, Column: i + 1, Name: name, Err: fmt.Errorf("%w: column %q appears twice", ErrBadValue, name)}
		}
		col[name] = i
	}
	for _, need := range required {
		if _, ok := col[need]; !ok {
			return nil, &ParseError{Line: 1, Err: fmt.Errorf("%w %q (the header has %q)", ErrMissingColumn, need, header)}
		}
	}
	return col, nil
}

// csvError turns encoding/csv's error into a ParseError.
func csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &ParseError{Line: pe.Line, Column: pe.Column, Err: pe.Err}
	}
	return err
}

// ReadSchildCSV reads a Schild dataset: columns antagonist_conc, conc and
// response (any order; concentrations in unit), one curve per antagonist
// concentration, in order of first appearance.
func ReadSchildCSV(r io.Reader, unit Unit) ([]schild.Curve, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	recs, err := cr.ReadAll()
	if err != nil {
		return nil, csvError(err)
	}
	if len(recs) < 2 {
		return nil, &ParseError{Line: 1, Err: ErrNoData}
	}
	col, err := columns(recs[0], "antagonist_conc", "conc", "response")
	if err != nil {
		return nil, err
	}
	var curves []schild.Curve
	index := map[float64]int{}
	for k, rec := range recs[1:] {
		line := k + 2
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		vals := map[string]float64{}
		for _, name := range []string{"antagonist_conc", "conc", "response"} {
			i := col[name]
			if i >= len(rec) {
				return nil, &ParseError{Line: line, Column: i + 1, Name: name, Err: fmt.Errorf("%w: value is empty", ErrBadValue)}
			}
			v, err := strconv.ParseFloat(strings.TrimSpace(rec[i]), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, &ParseError{Line: line, Column: i + 1, Name: name, Err: fmt.Errorf("%w: %q", ErrNotNumber, rec[i])}
			}
			if name != "response" && v < 0 {
				return nil, &ParseError{Line: line, Column: i + 1, Name: name, Err: fmt.Errorf("%w: %g is negative", ErrBadValue, v)}
			}
			vals[name] = v
		}
		b := unit.ToMolar(vals["antagonist_conc"])
		j, ok := index[b]
		if !ok {
			j = len(curves)
			index[b] = j
			curves = append(curves, schild.Curve{AntagonistConc: b})
		}
		curves[j].Points = append(curves[j].Points, fit.Point{Conc: unit.ToMolar(vals["conc"]), Response: vals["response"]})
	}
	return curves, nil
}
