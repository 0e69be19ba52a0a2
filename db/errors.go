package db

import (
	"context"
	"errors"
	"io"
	"net"
	"strconv"
	"syscall"
)

// Errors of the store, whatever the engine. Callers test for them with
// errors.Is; the API maps them to status codes.
var (
	// ErrNotFound: no record with that key.
	ErrNotFound = errors.New("not found")
	// ErrExists: a record with that key already exists.
	ErrExists = errors.New("already exists")
	// ErrReference: a referenced record (assay, compound, earlier run) does
	// not exist.
	ErrReference = errors.New("referenced record does not exist")
	// ErrInvalid: a value the store cannot hold as given: a JSON document
	// that is not JSON, text with a NUL byte or invalid UTF-8, a NaN, a
	// value outside a column's checks (PostgreSQL SQLSTATE class 22, check
	// and not-null violations; SQLite CHECK and NOT NULL constraints).
	ErrInvalid = errors.New("invalid value")
	// ErrUnavailable: the database cannot be reached or did not answer in
	// time: a refused, reset or lost connection, no pooled connection
	// free within the call deadline, the server starting up or shutting
	// down (PostgreSQL SQLSTATE class 08 and 57P01–57P03), too many
	// connections (53300), a SQLite lock held past busy_timeout, or the
	// store's own call deadline (Options.CallTimeout). Nothing was
	// written; the same request may succeed later.
	ErrUnavailable = errors.New("database unavailable")
)

// Error is an error of one store operation. Its text names the operation,
// the record's key and the category, and nothing of the engine:
//
//	db: FitRun("0193…"): not found
//	db: InsertAssay("a1"): already exists
//	db: InsertFitRun("r1"): settings: invalid value
//
// so that it is the same on both engines and may be shown to clients.
// Err is one of the sentinels above for errors a caller can act on; an
// error the store does not categorise (a lost connection, a cancelled
// context) keeps the engine's error in Err, is an internal error (a 5xx
// that the API never shows) and says so in its text. The driver's own
// error is kept for logs in Cause, never in Error.
type Error struct {
	Op    string // the store method, e.g. "FitRun", "InsertAssay", "Write"
	Key   string // the record's key; "" when the operation has none
	Field string // the column or document at fault; "" when not known
	Err   error  // a sentinel, or the uncategorised engine error
	cause error
}

func (e *Error) Error() string {
	s := "db: " + e.Op
	if e.Key != "" {
		s += "(" + strconv.Quote(e.Key) + ")"
	}
	s += ": "
	if e.Field != "" {
		s += e.Field + ": "
	}
	if !isSentinel(e.Err) {
		return s + "internal error: " + e.Err.Error()
	}
	return s + e.Err.Error()
}

// Unwrap returns the category (or the uncategorised engine error).
func (e *Error) Unwrap() error { return e.Err }

// Cause returns the driver's error behind a categorised one, for logs; nil
// when the store found the fault itself (e.g. invalid JSON).
func (e *Error) Cause() error { return e.cause }

func isSentinel(err error) bool {
	return err == ErrNotFound || err == ErrExists || err == ErrReference || err == ErrInvalid || err == ErrUnavailable
}

// unreachable reports the errors of a database that cannot be reached,
// whatever the engine: the store's call deadline passed, or the network
// refused, reset or closed the connection. A call its caller cancelled
// (a client that went away) is not one, whatever the driver said.
func unreachable(err error) bool {
	if errors.Is(err, errCallDeadline) {
		return true
	}
	if errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return false
	}
	for _, e := range []error{syscall.ECONNREFUSED, syscall.ECONNRESET, syscall.ECONNABORTED, syscall.EPIPE,
		syscall.EHOSTUNREACH, syscall.ENETUNREACH, syscall.ETIMEDOUT, io.ErrUnexpectedEOF, io.EOF, net.ErrClosed} {
		if errors.Is(err, e) {
			return true
		}
	}
	var ne net.Error
	return errors.As(err, &ne) && ne.Timeout()
}

// opError wraps err as the error of op on key: categorised by classify,
// or kept as it is when it is already a store error.
func opError(op, key string, err error, classify func(error) error) error {
	if err == nil {
		return nil
	}
	var se *Error
	if errors.As(err, &se) {
		return err
	}
	if isSentinel(err) {
		return &Error{Op: op, Key: key, Err: err}
	}
	if kind := classify(err); kind != nil {
		return &Error{Op: op, Key: key, Err: kind, cause: err}
	}
	return &Error{Op: op, Key: key, Err: err, cause: err}
}
