package db

import (
	"context"
	"errors"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"
)

// pgTx is one Write's transaction on PostgreSQL, pipelined. On a busy
// server a round trip costs more than the small statements of a write
// (each wakes the backend and the client: system calls on both sides), so
// pgTx sends as few as it can:
//
//   - BEGIN is not sent alone but ahead of the transaction's first
//     statement (pgx's Batch.BeginTx);
//   - a statement whose only outcome is an error (later: an audit entry, a
//     record with a fresh key) is held back and sent with the next
//     statement that needs an answer, or with COMMIT;
//   - COMMIT goes out with what is held back;
//   - a write that sent nothing before COMMIT takes no connection of its
//     own: it is committed in a group with others (groupcommit.go).
//
// A stored fit — BEGIN, its curve, its audit entry, its idempotency
// record, COMMIT — is one round trip instead of five (shared with the
// other writes of its group). Nothing changes in
// what is stored: every statement still runs in the transaction, in the
// order it was given. A held-back statement's error is reported by the
// call that sends it (a later statement, or Write), as the error of the
// operation that held it back; PostgreSQL aborts the transaction at it,
// so nothing is committed.
type pgTx struct {
	pool     *pgxpool.Pool
	conn     *pgxpool.Conn // nil until the first round trip
	at       time.Time     // the Write's deadline
	classify func(error) error
	tx       pgx.Tx // nil until BEGIN has been sent
	held     []heldStmt
}

// heldStmt is a statement held back until the next round trip, with the
// operation and key its error is reported under.
type heldStmt struct {
	op, key string
	stmt
}

// stmt is one statement with its arguments.
type stmt struct {
	q    string
	args []any
}

func (t *pgTx) deadline() time.Time { return t.at }

// hold queues a statement to go out with the next round trip.
func (t *pgTx) hold(op, key, q string, args []any) {
	t.held = append(t.held, heldStmt{op: op, key: key, stmt: stmt{q: q, args: args}})
}

// send runs, in one round trip, BEGIN when the transaction has not begun,
// the held statements and then tail, and returns tail's command tags.
func (t *pgTx) send(ctx context.Context, tail []stmt) ([]pgconn.CommandTag, error) {
	held := t.held
	t.held = nil
	if t.tx != nil && len(held) == 0 && len(tail) == 0 {
		return nil, nil
	}
	ctx, cancel := within(ctx, t.at)
	defer cancel()
	if t.conn == nil {
		c, err := t.pool.Acquire(ctx)
		if err != nil {
			return nil, timedOut(ctx, err)
		}
		t.conn = c
	}
	tx, tags, err := pipeline(ctx, t.conn.Conn(), t.tx, held, tail, t.classify)
	t.tx = tx
	return tags, err
}

// pipeline sends, in one round trip on conn, BEGIN when tx is nil (and
// returns the transaction it begins), then held and tail, and returns
// tail's command tags. The first error is returned: a held statement's
// as its operation's *Error, any other as the driver's.
func pipeline(ctx context.Context, conn *pgx.Conn, tx pgx.Tx, held []heldStmt, tail []stmt, classify func(error) error) (pgx.Tx, []pgconn.CommandTag, error) {
	var b pgx.Batch
	begin := tx == nil
	if begin {
		b.BeginTx(pgx.TxOptions{})
	}
	for _, h := range held {
		b.Queue(h.q, h.args...)
	}
	for _, s := range tail {
		b.Queue(s.q, s.args...)
	}
	var br pgx.BatchResults
	if begin {
		br = conn.SendBatch(ctx, &b)
		tx = br.Tx()
	} else {
		br = tx.SendBatch(ctx, &b)
	}
	var first error
	var firstOf *heldStmt
	if begin {
		if _, err := br.Exec(); err != nil {
			first = err
		}
	}
	for i := range held {
		if _, err := br.Exec(); err != nil && first == nil {
			first, firstOf = err, &held[i]
		}
	}
	tags := make([]pgconn.CommandTag, len(tail))
	for i := range tail {
		tag, err := br.Exec()
		if err != nil && first == nil {
			first = err
		}
		tags[i] = tag
	}
	if err := br.Close(); err != nil && first == nil {
		first = err
	}
	err := timedOut(ctx, first)
	if err != nil && firstOf != nil {
		err = opError(firstOf.op, firstOf.key, err, classify)
	}
	return tx, tags, err
}

// flush sends what is held back (and BEGIN), so that a statement that
// does not go through send (a query, COPY, River's insert) runs after it.
func (t *pgTx) flush(ctx context.Context) error {
	_, err := t.send(ctx, nil)
	return err
}

// commit sends what is held back with COMMIT. A transaction that never
// sent a statement has nothing to commit and sends nothing.
func (t *pgTx) commit(ctx context.Context) error {
	if t.tx == nil && len(t.held) == 0 {
		return nil
	}
	return committed(t.send(ctx, []stmt{commitStmt}))
}

// commitStmt ends a transaction.
var commitStmt = stmt{q: "commit"}

// committed is the outcome of a round trip that ended with COMMIT, given
// the round trip's tags and error.
func committed(tags []pgconn.CommandTag, err error) error {
	if err != nil {
		return err
	}
	// COMMIT of a transaction that an error aborted answers ROLLBACK.
	if tags[len(tags)-1].String() == "ROLLBACK" {
		return pgx.ErrTxCommitRollback
	}
	return nil
}

// rollback ends a begun transaction that is still open.
func (t *pgTx) rollback(ctx context.Context) {
	t.held = nil
	if t.conn == nil {
		return
	}
	ctx, cancel := within(ctx, t.at)
	defer cancel()
	rollback(ctx, t.conn.Conn(), t.tx)
}

// rollback ends tx on conn if it is still open. A rollback that fails
// leaves the connection broken, and the pool discards it.
func rollback(ctx context.Context, conn *pgx.Conn, tx pgx.Tx) {
	if tx != nil && conn.PgConn().TxStatus() != 'I' {
		tx.Rollback(ctx)
	}
}

// pgxTx is the transaction as a pgx.Tx, begun and up to date, for River
// to insert its job in.
func (t *pgTx) pgxTx(ctx context.Context) (pgx.Tx, error) {
	if err := t.flush(ctx); err != nil {
		return nil, err
	}
	if t.tx == nil {
		return nil, errors.New("transaction not begun")
	}
	return t.tx, nil
}

func (t *pgTx) exec(ctx context.Context, q string, args ...any) (int64, error) {
	tags, err := t.send(ctx, []stmt{{q: q, args: args}})
	if err != nil {
		return 0, err
	}
	return tags[0].RowsAffected(), nil
}

// execMany runs one statement for many rows in the same round trip as
// what is held back: the first failing row's error.
func (t *pgTx) execMany(ctx context.Context, q string, rows [][]any) error {
	tail := make([]stmt, len(rows))
	for i, r := range rows {
		tail[i] = stmt{q: q, args: r}
	}
	_, err := t.send(ctx, tail)
	return err
}

func (t *pgTx) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	if err := t.flush(ctx); err != nil {
		return failedRow{err}
	}
	return boundQueryRow(ctx, t.at, func(ctx context.Context) rowScanner { return t.tx.QueryRow(ctx, q, args...) })
}

func (t *pgTx) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	if err := t.flush(ctx); err != nil {
		return nil, err
	}
	return boundQuery(ctx, t.at, func(ctx context.Context) (rowsScanner, error) { return t.tx.Query(ctx, q, args...) })
}

// copyRows bulk-loads rows with COPY.
func (t *pgTx) copyRows(ctx context.Context, table string, cols []string, rows [][]any) error {
	if err := t.flush(ctx); err != nil {
		return err
	}
	ctx, cancel := within(ctx, t.at)
	defer cancel()
	_, err := t.tx.CopyFrom(ctx, pgx.Identifier{table}, cols, pgx.CopyFromRows(rows))
	return timedOut(ctx, err)
}

// failedRow is a row whose query could not be sent.
type failedRow struct{ err error }

func (r failedRow) Scan(...any) error { return r.err }

// release gives the connection back to the pool.
func (t *pgTx) release() {
	if t.conn != nil {
		t.conn.Release()
		t.conn = nil
	}
}
