package db

import (
	"context"
	"database/sql"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/riverqueue/river/riverdriver/riversqlite"
	"modernc.org/sqlite"
	sqlite3 "modernc.org/sqlite/lib"
)

// sqliteEngine is SQLite through database/sql and modernc.org/sqlite.
type sqliteEngine struct {
	db *sql.DB
}

// SQLiteFile is the database file's name in the data directory.
const SQLiteFile = "sluice.db"

// openSQLite opens (creating) dir/sluice.db in WAL mode and migrates (or
// checks) the schema. WAL with synchronous=NORMAL keeps every commit atomic and
// durable across a process crash, and fsyncs only at checkpoints.
func openSQLite(ctx context.Context, dir string, o Options) (*sqlStore, error) {
	if err := os.MkdirAll(dir, 0o750); err != nil {
		return nil, fmt.Errorf("data directory: %w", err)
	}
	dsn := "file:" + filepath.Join(dir, SQLiteFile) +
		"?_pragma=journal_mode(WAL)&_pragma=synchronous(NORMAL)&_pragma=foreign_keys(1)&_pragma=busy_timeout(10000)&_txlock=immediate"
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
	q, err := newRiverQueue(ctx, driver, func(q querier) (*sql.Tx, bool) {
		t, ok := q.(sqlTx)
		return t.tx, ok
	}, 100*time.Millisecond, o)
	if err != nil {
		db.Close()
		return nil, err
	}
	return &sqlStore{e: &sqliteEngine{db: db}, q: q}, nil
}

func (e *sqliteEngine) exec(ctx context.Context, q string, args ...any) (int64, error) {
	return rowsAffected(e.db.ExecContext(ctx, q, args...))
}

func rowsAffected(r sql.Result, err error) (int64, error) {
	if err != nil {
		return 0, err
	}
	return r.RowsAffected()
}

func (e *sqliteEngine) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return e.db.QueryRowContext(ctx, q, args...)
}

func (e *sqliteEngine) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	rows, err := e.db.QueryContext(ctx, q, args...)
	if err != nil {
		return nil, err
	}
	return sqlRows{rows}, nil
}

// inTx runs fn in one transaction, begun IMMEDIATE (the DSN's _txlock)
// so that two writers queue on the busy timeout instead of failing on
// upgrade; SQLite has one writer at a time.
func (e *sqliteEngine) inTx(ctx context.Context, fn func(querier) error) error {
	tx, err := e.db.BeginTx(ctx, nil)
	if err != nil {
		return err
	}
	if err := fn(sqlTx{tx}); err != nil {
		tx.Rollback()
		return err
	}
	return tx.Commit()
}

func (e *sqliteEngine) ping(ctx context.Context) error { return e.db.PingContext(ctx) }
func (e *sqliteEngine) close()                         { e.db.Close() }
func (e *sqliteEngine) name() string                   { return "sqlite" }
func (e *sqliteEngine) timeArg(t time.Time) any        { return t.UTC().Format(sqliteTime) }

func (e *sqliteEngine) stats() PoolStats {
	s := e.db.Stats()
	return PoolStats{Max: s.MaxOpenConnections, Open: s.OpenConnections, InUse: s.InUse, Idle: s.Idle}
}

// classify maps database/sql's errors and SQLite's extended result codes
// (https://sqlite.org/rescode.html) to the store's categories.
func (e *sqliteEngine) classify(err error) error {
	if errors.Is(err, sql.ErrNoRows) {
		return ErrNotFound
	}
	var se *sqlite.Error
	if !errors.As(err, &se) {
		return nil
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

// sqlTx and sqlRows adapt database/sql.
type sqlTx struct{ tx *sql.Tx }

func (t sqlTx) exec(ctx context.Context, q string, args ...any) (int64, error) {
	return rowsAffected(t.tx.ExecContext(ctx, q, args...))
}

func (t sqlTx) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return t.tx.QueryRowContext(ctx, q, args...)
}

func (t sqlTx) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	rows, err := t.tx.QueryContext(ctx, q, args...)
	if err != nil {
		return nil, err
	}
	return sqlRows{rows}, nil
}

func (t sqlTx) execMany(ctx context.Context, q string, rows [][]any) error {
	st, err := t.tx.PrepareContext(ctx, q)
	if err != nil {
		return err
	}
	defer st.Close()
	for _, r := range rows {
		if _, err := st.ExecContext(ctx, r...); err != nil {
			return err
		}
	}
	return nil
}

type sqlRows struct{ *sql.Rows }

func (r sqlRows) Close() { r.Rows.Close() }
