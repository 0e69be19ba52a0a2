package db

import (
	"context"
	"errors"
	"time"
)

// The store's call deadline: every call to the database (one read, one
// Write's transaction as a whole) must finish within Options.CallTimeout,
// so that a frozen database (a network partition, a server that accepts
// connections and never answers) cannot hold a request forever: the call
// fails with ErrUnavailable when its deadline passes, and the API answers
// 503 within the deadline.
const (
	// DefaultCallTimeout is Options.CallTimeout's zero value: long enough
	// for the slowest read of a large store (a potency history or drift
	// chart over 20 000 plates takes well under a second, see
	// deploy/README.md) and for a 1536-well plate's results, short enough
	// that a client or reverse proxy (60 s is a common timeout) hears a
	// 503 before it gives up.
	DefaultCallTimeout = 15 * time.Second
	// MinCallTimeout and MaxCallTimeout bound Options.CallTimeout.
	MinCallTimeout = 100 * time.Millisecond
	MaxCallTimeout = 10 * time.Minute
	// sqliteBusyTimeout is how long a SQLite writer waits for another
	// one's lock (busy_timeout) before failing with SQLITE_BUSY, at most:
	// never longer than the call's deadline, because SQLite's busy wait
	// does not see a cancelled context.
	sqliteBusyTimeout = 10 * time.Second
)

// errCallDeadline is the cause of a call's context when the store's own
// deadline passed (not the caller's cancellation or deadline).
var errCallDeadline = errors.New("no answer from the database within the call deadline")

// deadline is when a call begun now must end.
func deadline(timeout time.Duration) time.Time { return time.Now().Add(timeout) }

// within bounds ctx by the call deadline at.
func within(ctx context.Context, at time.Time) (context.Context, context.CancelFunc) {
	return context.WithDeadlineCause(ctx, at, errCallDeadline)
}

// timedOut marks err as the call deadline's when that deadline ended ctx,
// so that classify reports ErrUnavailable, and as the caller's
// cancellation when the caller's context ended first (a client that went
// away is no outage), so that errors.Is(err, context.Canceled) holds; any
// other error is returned as it is. Drivers report an ended context in
// their own words (pgx sets the connection's deadline and reports an I/O
// timeout, SQLite says "interrupted"); the context is the reliable
// witness.
func timedOut(ctx context.Context, err error) error {
	switch {
	case err == nil:
		return nil
	case context.Cause(ctx) == errCallDeadline:
		return &deadlineError{err: err}
	case ctx.Err() != nil && !errors.Is(err, ctx.Err()):
		return &endedError{err: err, ctxErr: ctx.Err()}
	}
	return err
}

// endedError is a driver's error of a call whose caller's context ended.
type endedError struct{ err, ctxErr error }

func (e *endedError) Error() string   { return e.ctxErr.Error() + ": " + e.err.Error() }
func (e *endedError) Unwrap() []error { return []error{e.ctxErr, e.err} }

// deadlineError is a driver's error of a call cut off by its deadline.
type deadlineError struct{ err error }

func (e *deadlineError) Error() string   { return errCallDeadline.Error() + ": " + e.err.Error() }
func (e *deadlineError) Unwrap() []error { return []error{errCallDeadline, e.err} }

// boundRow is a row whose query runs under a call deadline that ends when
// it is scanned.
type boundRow struct {
	row    rowScanner
	ctx    context.Context
	cancel context.CancelFunc
}

func (r boundRow) Scan(dest ...any) error {
	defer r.cancel()
	return timedOut(r.ctx, r.row.Scan(dest...))
}

// boundRows are rows whose query runs under a call deadline that ends when
// they are closed.
type boundRows struct {
	rowsScanner
	ctx    context.Context
	cancel context.CancelFunc
}

func (r boundRows) Err() error { return timedOut(r.ctx, r.rowsScanner.Err()) }
func (r boundRows) Scan(dest ...any) error {
	return timedOut(r.ctx, r.rowsScanner.Scan(dest...))
}
func (r boundRows) Close() {
	r.rowsScanner.Close()
	r.cancel()
}

// boundExec runs exec under a deadline at.
func boundExec(ctx context.Context, at time.Time, exec func(context.Context) (int64, error)) (int64, error) {
	ctx, cancel := within(ctx, at)
	defer cancel()
	n, err := exec(ctx)
	return n, timedOut(ctx, err)
}

// boundQueryRow runs queryRow under a deadline at that ends at Scan.
func boundQueryRow(ctx context.Context, at time.Time, queryRow func(context.Context) rowScanner) rowScanner {
	ctx, cancel := within(ctx, at)
	return boundRow{row: queryRow(ctx), ctx: ctx, cancel: cancel}
}

// boundQuery runs query under a deadline at that ends at Close.
func boundQuery(ctx context.Context, at time.Time, query func(context.Context) (rowsScanner, error)) (rowsScanner, error) {
	ctx, cancel := within(ctx, at)
	rows, err := query(ctx)
	if err != nil {
		cancel()
		return nil, timedOut(ctx, err)
	}
	return boundRows{rowsScanner: rows, ctx: ctx, cancel: cancel}, nil
}

// bounded is a transaction's querier: its statements share the deadline
// of the Write they belong to.
type bounded interface {
	deadline() time.Time
}

// withinTx bounds ctx by the deadline of the transaction q, if it has one.
func withinTx(ctx context.Context, q querier) (context.Context, context.CancelFunc) {
	if b, ok := q.(bounded); ok {
		return within(ctx, b.deadline())
	}
	return ctx, func() {}
}
