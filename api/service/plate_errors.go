package service

import (
	"errors"
	"fmt"

	"sluice/api/ingest"
	"sluice/fit/plate"
)

// Locate says where a plate error points: entry i of the submitted wells
// (-1 for a field of the plate as a whole) and the field's name.
type Locate func(i int, field string) FieldError

// locator is the Locate of a plate form: a JSON Pointer into a JSON body;
// for CSV the row and column of a well's field, or the query parameter of
// a plate field; for a grid the parameter of a plate field (a well's error
// names the well in its detail).
func locator(form PlateForm, wells []ingest.WellIn) Locate {
	switch form {
	case PlateCSV:
		return func(i int, field string) FieldError {
			if i < 0 || i >= len(wells) {
				return FieldError{Parameter: field}
			}
			return FieldError{Row: wells[i].Line, Column: wells[i].Columns[field]}
		}
	case PlateGrid:
		return func(i int, field string) FieldError {
			if i < 0 {
				return FieldError{Parameter: field}
			}
			// A well of the layout: the grid has no line numbers to
			// give, and the detail names the well.
			return FieldError{}
		}
	}
	return JSONLocate
}

// JSONLocate points into a plate or layout's JSON body.
func JSONLocate(i int, field string) FieldError {
	if i < 0 {
		return FieldError{Pointer: "/" + field}
	}
	return FieldError{Pointer: fmt.Sprintf("/wells/%d/%s", i, field)}
}

// locatedError is an ErrInvalid error at one located field.
func locatedError(loc Locate, i int, field, format string, a ...any) error {
	d := fmt.Sprintf(format, a...)
	fe := loc(i, field)
	fe.Detail = d
	return &Error{Kind: ErrInvalid, Detail: d, Fields: []FieldError{fe}}
}

// plateProblem turns the plate rules' errors (plate.Invalid) into one
// ErrInvalid error with a field for each broken rule, located by loc.
func plateProblem(err error, loc Locate) error {
	var inv plate.Invalid
	if !errors.As(err, &inv) || len(inv) == 0 {
		return err
	}
	re := &Error{Kind: ErrInvalid, Detail: inv[0].Detail}
	for _, we := range inv {
		fe := loc(we.Index, we.Field)
		fe.Detail = we.Detail
		re.Fields = append(re.Fields, fe)
	}
	if len(inv) > 1 {
		re.Detail = fmt.Sprintf("%s (and %d more)", inv[0].Detail, len(inv)-1)
	}
	return re
}
