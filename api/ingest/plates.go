package ingest

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"sluice/fit/plate"
)

// WellIn is one well as read from a file, before it is placed on a plate.
// Conc and AntagonistConc are in the file's unit; Line is where it was read
// (0 for JSON).
type WellIn struct {
	Well           string
	Role           string
	CompoundID     string
	Conc           float64
	HasConc        bool
	Value          float64
	HasValue       bool
	AntagonistID   string
	AntagonistConc float64
	Line           int
	// Columns are the CSV's 1-based column numbers by field name (shared
	// by every well of a file; nil for JSON), so that an error about a
	// well's field can name its cell.
	Columns map[string]int
}

// MaxPlateRows bounds a plate file.
const MaxPlateRows = 10000

// ReadPlateCSV reads a long plate CSV with the header
// well,role,compound_id,conc,value[,antagonist_id,antagonist_conc] (columns
// in any order; conc is required, as in a curve file). Control and empty
// wells may leave compound_id and conc blank; empty and excluded wells may
// leave value blank. Concentrations stay in the file's unit: the one
// given (unit; field names where, e.g. conc_unit), or the one the header
// names (conc_nM, "conc (µM)"), which is returned; neither is ErrNoUnit.
func ReadPlateCSV(r io.Reader, unit Unit, field string) ([]WellIn, Unit, error) {
	var out []WellIn
	var cols map[string]int
	spec := rowSpec{required: []string{"well", "role", "conc", "value"}, conc: []string{"conc", "antagonist_conc"}, maxRows: MaxPlateRows}
	setUnit := func(h header) (err error) {
		unit, err = fileUnit(unit, field, h)
		return err
	}
	err := eachRow(r, spec, setUnit, func(row csvRow) error {
		if cols == nil {
			cols = make(map[string]int, len(row.col))
			for name, i := range row.col {
				cols[name] = i + 1
			}
		}
		w := WellIn{Line: row.line, Columns: cols}
		w.Well, _, _ = row.text("well")
		w.Role, _, _ = row.text("role")
		w.CompoundID, _, _ = row.text("compound_id")
		w.AntagonistID, _, _ = row.text("antagonist_id")
		var err error
		if w.Conc, w.HasConc, err = row.number("conc", false); err != nil {
			return err
		}
		if w.Value, w.HasValue, err = row.number("value", false); err != nil {
			return err
		}
		if w.AntagonistConc, _, err = row.number("antagonist_conc", false); err != nil {
			return err
		}
		out = append(out, w)
		return nil
	})
	if err != nil {
		return nil, NoUnit, err
	}
	if len(out) == 0 {
		return nil, NoUnit, &ParseError{Line: 2, Err: ErrNoData}
	}
	return out, unit, nil
}

// ReadGrid reads a reader's plate export: a first row of column numbers
// (its first cell may be blank or a label) and then one row per plate row,
// starting with the row letter. It returns the value of every well by its
// canonical name.
func ReadGrid(r io.Reader, f plate.Format) (map[string]float64, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	recs, err := cr.ReadAll()
	if err != nil {
		return nil, csvError(err)
	}
	// Skip leading blank lines.
	for len(recs) > 0 && len(recs[0]) == 1 && strings.TrimSpace(recs[0][0]) == "" {
		recs = recs[1:]
	}
	if len(recs) < 2 {
		return nil, &ParseError{Line: 1, Err: ErrNoData}
	}
	head := recs[0]
	cols := make([]int, len(head))
	for i := 1; i < len(head); i++ {
		c, err := strconv.Atoi(strings.TrimSpace(head[i]))
		if err != nil || c < 1 || c > f.Cols {
			return nil, &ParseError{Line: 1, Column: i + 1, Err: fmt.Errorf("%w: column header %q is not 1–%d", ErrBadValue, head[i], f.Cols)}
		}
		cols[i] = c
	}
	out := map[string]float64{}
	for k, rec := range recs[1:] {
		line := k + 2
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		rowName := strings.TrimSpace(rec[0])
		for i := 1; i < len(rec) && i < len(head); i++ {
			s := strings.TrimSpace(rec[i])
			if s == "" {
				continue
			}
			w, err := f.ParseWell(rowName + strconv.Itoa(cols[i]))
			if err != nil {
				return nil, &ParseError{Line: line, Column: 1, Err: fmt.Errorf("%w: %v", ErrBadValue, err)}
			}
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, &ParseError{Line: line, Column: i + 1, Err: fmt.Errorf("%w: %q", ErrNotNumber, s)}
			}
			name := f.Name(w)
			if _, dup := out[name]; dup {
				return nil, &ParseError{Line: line, Column: 1, Err: fmt.Errorf("%w: row %s appears twice", ErrBadValue, rowName)}
			}
			out[name] = v
		}
		if len(rec) > len(head) {
			return nil, &ParseError{Line: line, Column: len(head) + 1, Err: errors.Join(ErrBadValue, fmt.Errorf("more cells than column headers"))}
		}
	}
	if len(out) == 0 {
		return nil, &ParseError{Line: 2, Err: ErrNoData}
	}
	return out, nil
}
