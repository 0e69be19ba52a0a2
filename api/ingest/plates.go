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
	Value          float64
	HasValue       bool
	AntagonistID   string
	AntagonistConc float64
	Line           int
}

// MaxPlateRows bounds a plate file.
const MaxPlateRows = 10000

// ReadPlateCSV reads a long plate CSV with the header
// well,role,compound_id,conc,value[,antagonist_id,antagonist_conc] (columns
// in any order). Control and empty wells may leave compound_id and conc
// blank; empty and excluded wells may leave value blank.
func ReadPlateCSV(r io.Reader) ([]WellIn, error) {
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
	col, err := columns(header, "well", "role", "value")
	if err != nil {
		return nil, err
	}
	var out []WellIn
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
		if len(out) >= MaxPlateRows {
			return nil, &ParseError{Line: line, Err: fmt.Errorf("%w: more than %d rows", ErrBadValue, MaxPlateRows)}
		}
		get := func(name string) (string, int) {
			i, ok := col[name]
			if !ok || i >= len(rec) {
				return "", i + 1
			}
			return strings.TrimSpace(rec[i]), i + 1
		}
		num := func(name string) (float64, bool, error) {
			s, c := get(name)
			if s == "" {
				return 0, false, nil
			}
			v, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return 0, false, &ParseError{Line: line, Column: c, Name: name, Err: fmt.Errorf("%w: %q", ErrNotNumber, s)}
			}
			return v, true, nil
		}
		w := WellIn{Line: line}
		w.Well, _ = get("well")
		w.Role, _ = get("role")
		w.CompoundID, _ = get("compound_id")
		w.AntagonistID, _ = get("antagonist_id")
		if w.Conc, _, err = num("conc"); err != nil {
			return nil, err
		}
		if w.Value, w.HasValue, err = num("value"); err != nil {
			return nil, err
		}
		if w.AntagonistConc, _, err = num("antagonist_conc"); err != nil {
			return nil, err
		}
		out = append(out, w)
	}
	if len(out) == 0 {
		return nil, &ParseError{Line: 2, Err: ErrNoData}
	}
	return out, nil
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
