package db

import (
	"context"
	"math"
	"strings"
	"unicode/utf8"
)

// Write implements Transactor.Write: the writer records the first error
// that aborts the write (PostgreSQL aborts the transaction at it; SQLite
// is made to behave the same), and fn's nil cannot commit past it.
func (s *sqlStore) Write(ctx context.Context, fn func(Writer) error) error {
	// fnFailed tells fn's own error (returned as it is) from the engine's
	// at BEGIN or COMMIT (wrapped as Write's). Comparing the errors
	// themselves could panic on an uncomparable error type.
	fnFailed := false
	err := s.e.inTx(ctx, func(q querier) error {
		w := &sqlWriter{q: q, e: s.e, queue: s.q}
		err := fn(w)
		if err == nil {
			err = w.err
		}
		fnFailed = err != nil
		return err
	})
	if fnFailed {
		return err
	}
	return opError("Write", "", err, s.e.classify)
}

// sqlWriter implements Writer inside a transaction.
type sqlWriter struct {
	q     querier
	e     engine
	queue queue
	// err is the first error that aborted the write.
	err error
}

// exec runs one statement of op on key and returns the rows it touched.
// Arguments are checked first (checkArgs) so that both engines refuse the
// same values.
func (w *sqlWriter) exec(ctx context.Context, op, key, q string, args ...any) (int64, error) {
	if w.err != nil {
		return 0, w.err
	}
	if err := checkArgs(args); err != nil {
		return 0, w.abort(&Error{Op: op, Key: key, Err: ErrInvalid})
	}
	n, err := w.q.exec(ctx, q, args...)
	if err != nil {
		return 0, w.abort(opError(op, key, err, w.e.classify))
	}
	return n, nil
}

// insert runs an INSERT … ON CONFLICT DO NOTHING and reports a taken key
// as ErrExists without aborting the write (no statement failed).
func (w *sqlWriter) insert(ctx context.Context, op, key, q string, args ...any) error {
	n, err := w.exec(ctx, op, key, q+" ON CONFLICT DO NOTHING", args...)
	if err != nil {
		return err
	}
	if n == 0 {
		return &Error{Op: op, Key: key, Err: ErrExists}
	}
	return nil
}

// later runs a statement whose only outcome is an error: an insert that
// nothing reads back within the write and whose taken key is a failure,
// not a choice (an audit entry, a record under a fresh key). PostgreSQL
// holds it back to send it with the next statement or with COMMIT
// (pgTx); its error then comes from that call or from Write, as op's
// error. Like any error but a per-call ErrExists, it aborts the write.
func (w *sqlWriter) later(ctx context.Context, op, key, q string, args ...any) error {
	if w.err != nil {
		return w.err
	}
	if err := checkArgs(args); err != nil {
		return w.abort(&Error{Op: op, Key: key, Err: ErrInvalid})
	}
	if h, ok := w.q.(holder); ok {
		h.hold(op, key, q, args)
		return nil
	}
	_, err := w.exec(ctx, op, key, q, args...)
	return err
}

// holder is a querier that can hold a statement back until its next
// round trip (PostgreSQL's pgTx).
type holder interface {
	hold(op, key, q string, args []any)
}

// abort records err as the error that ends the write.
func (w *sqlWriter) abort(err error) error {
	if w.err == nil {
		w.err = err
	}
	return err
}

// invalid reports a value found invalid before it reached the engine; like
// every error but ErrExists, it aborts the write.
func (w *sqlWriter) invalid(op, key, field string) error {
	return w.abort(&Error{Op: op, Key: key, Field: field, Err: ErrInvalid})
}

// checkArgs refuses what one engine would store and the other refuse, so
// that both behave the same: text with a NUL byte or invalid UTF-8
// (PostgreSQL refuses both; SQLite stores them) and NaN (SQLite stores it
// as NULL; PostgreSQL as NaN).
func checkArgs(args []any) error {
	for _, a := range args {
		switch v := a.(type) {
		case string:
			if strings.IndexByte(v, 0) >= 0 || !utf8.ValidString(v) {
				return ErrInvalid
			}
		case float64:
			if math.IsNaN(v) {
				return ErrInvalid
			}
		case *float64:
			if v != nil && math.IsNaN(*v) {
				return ErrInvalid
			}
		}
	}
	return nil
}

// read wraps a read's error as the error of op on key.
func (s *sqlStore) read(op, key string, err error) error {
	return opError(op, key, err, s.e.classify)
}
