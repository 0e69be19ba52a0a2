package db

import (
	"context"
	"errors"
	"io"
	"testing"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
)

// A failed group is tried again write by write only when PostgreSQL
// refused a statement, so nothing was committed; after a lost connection
// or a passed deadline COMMIT may have been applied.
func TestRefused(t *testing.T) {
	taken := &pgconn.PgError{Code: "23505"}
	for _, c := range []struct {
		name string
		err  error
		want bool
	}{
		{"a held statement's unique violation", opError("InsertIdempotent", "k", taken, (&pgEngine{}).classify), true},
		{"a statement's error", taken, true},
		{"COMMIT answered ROLLBACK", pgx.ErrTxCommitRollback, true},
		{"a lost connection", opError("InsertAudit", "x", io.ErrUnexpectedEOF, (&pgEngine{}).classify), false},
		{"the call deadline", &deadlineError{err: context.DeadlineExceeded}, false},
		{"the store's own check", &Error{Op: "InsertAudit", Err: ErrInvalid}, false},
		{"something else", errors.New("x"), false},
	} {
		if got := refused(c.err); got != c.want {
			t.Errorf("%s: refused = %v, want %v", c.name, got, c.want)
		}
	}
}
