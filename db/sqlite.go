package db

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/riverqueue/river/riverdriver/riversqlite"
	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// sqliteEngine is SQLite through database/sql and modernc.org/sqlite.
type sqliteEngine struct {
	db *sql.DB
	// timeout bounds every call (Options.CallTimeout).
	timeout time.Duration
}

// SQLiteFile is the database file's name in the data directory.
const SQLiteFile = "sluice.db"

// openSQLite opens (creating) dir/sluice.db in WAL mode and migrates (or
// checks) the schema. WAL with synchronous=NORMAL keeps every commit atomic and
// durable across a process crash, and fsyncs only at checkpoints. A writer
// waits for another's lock at most busy_timeout (sqliteBusyTimeout, or the
// call deadline if shorter: SQLite's busy wait does not see a cancelled
// context), then fails with SQLITE_BUSY, which is ErrUnavailable.
func openSQLite(ctx context.Context, dir string, o Options) (*sqlStore, error) {
	if err := os.MkdirAll(dir, 0o750); err != nil {
		return nil, fmt.Errorf("data directory: %w", err)
	}
	busy := min(sqliteBusyTimeout, o.callTimeout())
	dsn := "file:" + filepath.Join(dir, SQLiteFile) +
		"?_pragma=journal_mode(WAL)&_pragma=synchronous(NORMAL)&_pragma=foreign_keys(1)&_pragma=busy_timeout(" +
		strconv.FormatInt(busy.Milliseconds(), 10) + ")&_txlock=immediate"
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, fmt.Errorf("open SQLite: %w", err)
	}
	// One writer at a time is SQLite's rule; a few connections let reads
	// run beside it.
	db.SetMaxOpenConns(4)
	if err := db.PingContext(ctx); err != nil {
		db.Close()
		return nil, fmt.Errorf("open SQLite: %w", err)
	}
	// SQLite has one writer at a time and the file belongs to one process:
	// migrations need no lock of their own.
	driver := riversqlite.New(db)
	if err := (migrator[*sql.Tx]{db: db, engine: "sqlite", river: driver}).prepare(ctx, o); err != nil {
		db.Close()
		return nil, err
	}
	q, err := newRiverQueue(ctx, driver, func(_ context.Context, q querier) (*sql.Tx, error) {
		t, ok := q.(sqlTx)
		if !ok {
			return nil, errors.New("enqueue outside a transaction")
		}
		return t.tx, nil
	}, 100*time.Millisecond, o)
	if err != nil {
		db.Close()
		return nil, err
	}
	return &sqlStore{e: &sqliteEngine{db: db, timeout: o.callTimeout()}, q: q, timeout: o.callTimeout()}, nil
}

// exec, queryRow and query each run under a call deadline of their own
// (deadline.go); the driver interrupts a statement whose context ends.
func (e *sqliteEngine) exec(ctx context.Context, q string, args ...any) (int64, error) {
	return boundExec(ctx, deadline(e.timeout), func(ctx context.Context) (int64, error) {
		return rowsAffected(e.db.ExecContext(ctx, q, args...))
	})
}

func rowsAffected(r sql.Result, err error) (int64, error) {
	if err != nil {
		return 0, err
	}
	return r.RowsAffected()
}

func (e *sqliteEngine) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return boundQueryRow(ctx, deadline(e.timeout), func(ctx context.Context) rowScanner { return e.db.QueryRowContext(ctx, q, args...) })
}

func (e *sqliteEngine) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	return boundQuery(ctx, deadline(e.timeout), func(ctx context.Context) (rowsScanner, error) {
		rows, err := e.db.QueryContext(ctx, q, args...)
		if err != nil {
			return nil, err
		}
		return sqlRows{rows}, nil
	})
}

// inTx runs fn in one transaction, begun IMMEDIATE (the DSN's _txlock)
// so that two writers queue on the busy timeout instead of failing on
// upgrade; SQLite has one writer at a time. The transaction, every
// statement in it included, ends within one call deadline.
func (e *sqliteEngine) inTx(ctx context.Context, fn func(querier) error) error {
	at := deadline(e.timeout)
	ctx, cancel := within(ctx, at)
	defer cancel()
	tx, err := e.db.BeginTx(ctx, nil)
	if err != nil {
		return timedOut(ctx, err)
	}
	if err := fn(sqlTx{tx: tx, at: at}); err != nil {
		tx.Rollback()
		return err
	}
	return timedOut(ctx, tx.Commit())
}

func (e *sqliteEngine) ping(ctx context.Context) error {
	ctx, cancel := within(ctx, deadline(e.timeout))
	defer cancel()
	return timedOut(ctx, e.db.PingContext(ctx))
}
func (e *sqliteEngine) close()                  { e.db.Close() }
func (e *sqliteEngine) name() string            { return "sqlite" }
func (e *sqliteEngine) timeArg(t time.Time) any { return t.UTC().Format(sqliteTime) }

func (e *sqliteEngine) stats() PoolStats {
	s := e.db.Stats()
	return PoolStats{Max: s.MaxOpenConnections, Open: s.OpenConnections, InUse: s.InUse, Idle: s.Idle}
}

// classify maps database/sql's errors and SQLite's extended result codes
// (https://sqlite.org/rescode.html) to the store's categories. SQLITE_BUSY
// and SQLITE_LOCKED with any extension (another connection held its lock
// past busy_timeout) are ErrUnavailable.
func (e *sqliteEngine) classify(err error) error {
	if errors.Is(err, sql.ErrNoRows) {
		return ErrNotFound
	}
	if unreachable(err) {
		return ErrUnavailable
	}
	var se *sqlite.Error
	if !errors.As(err, &se) {
		return nil
	}
	if primary := se.Code() & 0xff; primary == sqlite3.SQLITE_BUSY || primary == sqlite3.SQLITE_LOCKED {
		return ErrUnavailable
	}
	switch se.Code() {
	case sqlite3.SQLITE_CONSTRAINT_PRIMARYKEY, sqlite3.SQLITE_CONSTRAINT_UNIQUE:
		return ErrExists
	case sqlite3.SQLITE_CONSTRAINT_FOREIGNKEY:
		return ErrReference
	case sqlite3.SQLITE_CONSTRAINT_CHECK, sqlite3.SQLITE_CONSTRAINT_NOTNULL, sqlite3.SQLITE_MISMATCH:
		return ErrInvalid
	}
	return nil
}

// sqlTx and sqlRows adapt database/sql; a transaction's statements end
// by its deadline at.
type sqlTx struct {
	tx *sql.Tx
	at time.Time
}

func (t sqlTx) deadline() time.Time { return t.at }

func (t sqlTx) exec(ctx context.Context, q string, args ...any) (int64, error) {
	return boundExec(ctx, t.at, func(ctx context.Context) (int64, error) {
		return rowsAffected(t.tx.ExecContext(ctx, q, args...))
	})
}

func (t sqlTx) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return boundQueryRow(ctx, t.at, func(ctx context.Context) rowScanner { return t.tx.QueryRowContext(ctx, q, args...) })
}

func (t sqlTx) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	return boundQuery(ctx, t.at, func(ctx context.Context) (rowsScanner, error) {
		rows, err := t.tx.QueryContext(ctx, q, args...)
		if err != nil {
			return nil, err
		}
		return sqlRows{rows}, nil
	})
}

func (t sqlTx) execMany(ctx context.Context, q string, rows [][]any) error {
	ctx, cancel := within(ctx, t.at)
	defer cancel()
	st, err := t.tx.PrepareContext(ctx, q)
	if err != nil {
		return timedOut(ctx, err)
	}
	defer st.Close()
	for _, r := range rows {
		if _, err := st.ExecContext(ctx, r...); err != nil {
			return timedOut(ctx, err)
		}
	}
	return nil
}

type sqlRows struct{ *sql.Rows }

func (r sqlRows) Close() { r.Rows.Close() }
