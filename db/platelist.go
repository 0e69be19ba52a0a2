package db

import (
	"context"
	"strconv"
	"time"
)

// PlateFilter selects plates for PlateList.
type PlateFilter struct {
	AssayID  string    // "" for every assay
	Barcode  string    // "" for any
	From, To time.Time // experiment time (measured_at, else created_at) in [From, To); zero does not bound
	// Cursor is the last plate ID of the previous page; "" for the first.
	Cursor string
	// Limit is 1–MaxListLimit; zero means 100.
	Limit int
}

// PlateList lists plates newest experiment first (then by ID, descending)
// and returns the cursor of the next page ("" on the last). It walks the
// index plates_measured, or plates_assay_measured with an assay.
func (s *sqlStore) PlateList(ctx context.Context, f PlateFilter) ([]Plate, string, error) {
	const op = "PlateList"
	limit := f.Limit
	if limit == 0 {
		limit = 100
	}
	if limit < 0 || limit > MaxListLimit {
		return nil, "", &Error{Op: op, Field: "limit", Err: ErrInvalid}
	}
	const at = "COALESCE(measured_at, created_at)"
	var args []any
	q := "SELECT id FROM plates WHERE 1 = 1"
	add := func(cond string, v any) {
		args = append(args, v)
		q += " AND " + cond + " $" + strconv.Itoa(len(args))
	}
	if f.AssayID != "" {
		add("assay_id =", f.AssayID)
	}
	if f.Barcode != "" {
		add("barcode =", f.Barcode)
	}
	if !f.From.IsZero() {
		add(at+" >=", s.e.timeArg(f.From))
	}
	if !f.To.IsZero() {
		add(at+" <", s.e.timeArg(f.To))
	}
	if f.Cursor != "" {
		args = append(args, f.Cursor)
		n := "$" + strconv.Itoa(len(args))
		q += " AND (" + at + " < (SELECT " + at + " FROM plates WHERE id = " + n + ") OR (" + at +
			" = (SELECT " + at + " FROM plates WHERE id = " + n + ") AND id < " + n + "))"
	}
	q += " ORDER BY " + at + " DESC, id DESC LIMIT " + strconv.Itoa(limit+1)
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, "", s.read(op, "", err)
	}
	var ids []string
	for rows.Next() {
		var id string
		if err := rows.Scan(&id); err != nil {
			rows.Close()
			return nil, "", s.read(op, "", err)
		}
		ids = append(ids, id)
	}
	err = rows.Err()
	rows.Close()
	if err != nil {
		return nil, "", s.read(op, "", err)
	}
	next := ""
	if len(ids) > limit {
		ids = ids[:limit]
		next = ids[limit-1]
	}
	out := make([]Plate, 0, len(ids))
	for _, id := range ids {
		p, err := s.Plate(ctx, id)
		if err != nil {
			return nil, "", err
		}
		out = append(out, *p)
	}
	return out, next, nil
}
