package ingest

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// csvRow is one data row of a CSV file with a header.
type csvRow struct {
	line int
	rec  []string
	col  map[string]int
}

// text returns the trimmed value of the named column, its 1-based column
// number, and whether the row has that column.
func (r csvRow) text(name string) (string, int, bool) {
	i, ok := r.col[name]
	if !ok || i >= len(r.rec) {
		return "", i + 1, false
	}
	return strings.TrimSpace(r.rec[i]), i + 1, true
}

// number parses the named column as a finite number. An empty value is an
// error when required, else (0, false, nil).
func (r csvRow) number(name string, required bool) (float64, bool, error) {
	s, c, _ := r.text(name)
	if s == "" {
		if required {
			return 0, false, &ParseError{Line: r.line, Column: c, Name: name, Err: fmt.Errorf("%w: value is empty", ErrBadValue)}
		}
		return 0, false, nil
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, false, &ParseError{Line: r.line, Column: c, Name: name, Err: fmt.Errorf("%w: %q", ErrNotNumber, s)}
	}
	return v, true, nil
}

// nonNegative is number for a required value that must be ≥ 0.
func (r csvRow) nonNegative(name, what string) (float64, error) {
	v, _, err := r.number(name, true)
	if err != nil {
		return 0, err
	}
	if v < 0 {
		_, c, _ := r.text(name)
		return 0, &ParseError{Line: r.line, Column: c, Name: name, Err: fmt.Errorf("%w: %s %g is negative", ErrBadValue, what, v)}
	}
	return v, nil
}

// header is a CSV header: each column by its base name (lower-cased;
// a concentration column's unit suffix removed), as written, and the
// unit a concentration column names.
type header struct {
	col      map[string]int
	names    map[string]string
	units    map[string]Unit
	concCols []string // the concentration columns present, in header order
}

// rowSpec says what a CSV must hold: the required columns (base names),
// which columns are concentrations (they may carry a unit: conc_nM), and
// how many rows it may have.
type rowSpec struct {
	required []string
	conc     []string
	maxRows  int
}

// eachRow reads a CSV whose header names its columns (any order; the
// required ones must be there), calls onHeader (if not nil) with the
// header, and then fn for every row that is not blank, refusing more than
// spec.maxRows of them.
func eachRow(r io.Reader, spec rowSpec, onHeader func(header) error, fn func(csvRow) error) error {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	rec, err := cr.Read()
	if err == io.EOF {
		return &ParseError{Line: 1, Err: ErrNoData}
	}
	if err != nil {
		return csvError(err)
	}
	hdr, err := readHeader(rec, spec)
	if err != nil {
		return err
	}
	if onHeader != nil {
		if err := onHeader(hdr); err != nil {
			return err
		}
	}
	rows := 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			return nil
		}
		if err != nil {
			return csvError(err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		if rows++; rows > spec.maxRows {
			return &ParseError{Line: line, Err: fmt.Errorf("%w: more than %d rows", ErrBadValue, spec.maxRows)}
		}
		if err := fn(csvRow{line: line, rec: rec, col: hdr.col}); err != nil {
			return err
		}
	}
}

// readHeader maps a header's column names (trimmed, lower-case, without a
// byte-order mark; a concentration column by its base name) to their
// index, refusing a name given twice and requiring the named columns.
func readHeader(rec []string, spec rowSpec) (header, error) {
	hdr := header{col: map[string]int{}, names: map[string]string{}, units: map[string]Unit{}}
	for i, h := range rec {
		written := strings.TrimSpace(strings.TrimPrefix(h, "\ufeff"))
		name := strings.ToLower(written)
		if base, u, ok := headerUnit(name, spec.conc...); ok {
			name = base
			hdr.units[base] = u
		}
		if _, dup := hdr.col[name]; dup && name != "" {
			return header{}, &ParseError{Line: 1, Column: i + 1, Name: written, Err: fmt.Errorf("%w: column %q appears twice", ErrBadValue, name)}
		}
		hdr.col[name], hdr.names[name] = i, written
	}
	for _, need := range spec.required {
		if _, ok := hdr.col[need]; !ok {
			return header{}, &ParseError{Line: 1, Err: fmt.Errorf("%w %q (the header has %q)", ErrMissingColumn, need, rec)}
		}
	}
	for _, c := range spec.conc {
		if _, ok := hdr.col[c]; ok {
			hdr.concCols = append(hdr.concCols, c)
		}
	}
	return hdr, nil
}

// csvError turns encoding/csv's error into a ParseError.
func csvError(err error) error {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return &ParseError{Line: pe.Line, Column: pe.Column, Err: fmt.Errorf("%w: %w", ErrSyntax, pe.Err)}
	}
	return err
}
