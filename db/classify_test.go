package db

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"io"
	"net"
	"os"
	"syscall"
	"testing"
	"time"

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
		"P0001": nil,        // raise_exception (the immutability trigger)
		"57014": nil,        // query_canceled: a cancelled statement, not an outage
		// An unreachable or unready server: 503, try again later.
		"08000": ErrUnavailable, // connection_exception
		"08006": ErrUnavailable, // connection_failure
		"08P01": ErrUnavailable, // protocol_violation (class 08)
		"57P01": ErrUnavailable, // admin_shutdown
		"57P02": ErrUnavailable, // crash_shutdown
		"57P03": ErrUnavailable, // cannot_connect_now ("the database system is starting up")
		"53300": ErrUnavailable, // too_many_connections: the server is full
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

// A database that cannot be reached is ErrUnavailable on both engines: a
// refused or reset connection, a failed connection attempt, the store's
// own call deadline, a SQLite lock held past busy_timeout. A call its
// caller cancelled is not, even when the driver reports an I/O timeout
// (pgx sets the connection's deadline to stop a cancelled call).
func TestClassifyUnavailable(t *testing.T) {
	pg, lite := &pgEngine{}, &sqliteEngine{}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	timeout := &net.OpError{Op: "read", Net: "tcp", Err: os.ErrDeadlineExceeded}
	expired, stop := within(context.Background(), time.Now())
	defer stop()
	<-expired.Done()
	for _, c := range []struct {
		name string
		err  error
		want error
	}{
		{"refused", &net.OpError{Op: "dial", Net: "tcp", Err: os.NewSyscallError("connect", syscall.ECONNREFUSED)}, ErrUnavailable},
		{"reset", fmt.Errorf("read: %w", syscall.ECONNRESET), ErrUnavailable},
		{"lost", fmt.Errorf("receive message: %w", io.ErrUnexpectedEOF), ErrUnavailable},
		{"I/O timeout", timeout, ErrUnavailable},
		{"call deadline", timedOut(expired, timeout), ErrUnavailable},
		{"client gone", timedOut(ctx, timeout), nil},
		{"plain cancel", context.Canceled, nil},
	} {
		for _, e := range []engine{pg, lite} {
			if got := e.classify(c.err); got != c.want {
				t.Errorf("%s on %s: %v, want %v", c.name, e.name(), got, c.want)
			}
		}
	}
	connect := &pgconn.ConnectError{Config: &pgconn.Config{}}
	if got := pg.classify(connect); got != ErrUnavailable {
		t.Errorf("connect error: %v", got)
	}
	// Errors through opError keep the store's wording and say unavailable.
	err := opError("Assays", "", timedOut(expired, timeout), pg.classify)
	if !errors.Is(err, ErrUnavailable) || err.Error() != "db: Assays: database unavailable" {
		t.Errorf("%v", err)
	}
}
