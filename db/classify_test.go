package db

import (
	"database/sql"
	"errors"
	"fmt"
	"testing"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
)

// PostgreSQL's SQLSTATEs map to the store's categories (PostgreSQL
// documentation, Appendix A): class 22 (data exception) is ErrInvalid
// whatever its subclass.
func TestClassifyPostgres(t *testing.T) {
	e := &pgEngine{}
	for code, want := range map[string]error{
		"23505": ErrExists, "23503": ErrReference, "23502": ErrInvalid, "23514": ErrInvalid,
		"22001": ErrInvalid, // string_data_right_truncation
		"22003": ErrInvalid, // numeric_value_out_of_range
		"22007": ErrInvalid, // invalid_datetime_format
		"22021": ErrInvalid, // character_not_in_repertoire (a NUL byte)
		"22P02": ErrInvalid, // invalid_text_representation
		"22P05": ErrInvalid, // untranslatable_character (\u0000 in jsonb)
		"40001": nil,        // serialization_failure: retry, not the client's fault
		"53300": nil,        // too_many_connections
		"P0001": nil,        // raise_exception (the immutability trigger)
	} {
		err := fmt.Errorf("exec: %w", &pgconn.PgError{Code: code, Message: "driver text"})
		if got := e.classify(err); got != want {
			t.Errorf("SQLSTATE %s: %v, want %v", code, got, want)
		}
	}
	if got := e.classify(pgx.ErrNoRows); got != ErrNotFound {
		t.Errorf("no rows: %v", got)
	}
	if got := (&sqliteEngine{}).classify(sql.ErrNoRows); got != ErrNotFound {
		t.Errorf("SQLite no rows: %v", got)
	}
	// The category is what callers see; the driver's text only in Cause.
	driver := &pgconn.PgError{Code: "23505", Message: `duplicate key value violates unique constraint "assays_pkey"`}
	err := opError("InsertAssay", "a1", driver, e.classify)
	var de *Error
	if !errors.As(err, &de) || err.Error() != `db: InsertAssay("a1"): already exists` || de.Cause() != driver || !errors.Is(err, ErrExists) {
		t.Errorf("%v (cause %v)", err, de.Cause())
	}
}
