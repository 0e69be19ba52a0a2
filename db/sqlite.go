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

// openSQLite opens (creating) dir/sluice.db in WAL mode and applies the
// migrations. WAL with synchronous=NORMAL keeps every commit atomic and
// durable across a process crash, and fsyncs only at checkpoints.
func openSQLite(ctx context.Context, dir string) (*sqlStore, error) {
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
	if err := migrate(ctx, db, "sqlite"); err != nil {
		db.Close()
		return nil, err
	}
	q, err := newRiverQueue(ctx, riversqlite.New(db), func(q querier) (*sql.Tx, bool) {
		t, ok := q.(sqlTx)
		return t.tx, ok
	}, 100*time.Millisecond)
	if err != nil {
		db.Close()
		return nil, err
	}
	return &sqlStore{e: &sqliteEngine{db: db}, q: q}, nil
}

func (e *sqliteEngine) exec(ctx context.Context, q string, args ...any) error {
	_, err := e.db.ExecContext(ctx, q, args...)
	return err
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

// translate maps database/sql's and SQLite's result codes
// (https://sqlite.org/rescode.html) to the store's errors.
func (e *sqliteEngine) translate(err error) error {
	if err == nil {
		return nil
	}
	if errors.Is(err, sql.ErrNoRows) {
		return fmt.Errorf("%w (%v)", ErrNotFound, err)
	}
	var se *sqlite.Error
	if errors.As(err, &se) {
		switch se.Code() {
		case sqlite3.SQLITE_CONSTRAINT_PRIMARYKEY, sqlite3.SQLITE_CONSTRAINT_UNIQUE:
			return fmt.Errorf("%w: %v", ErrExists, se)
		case sqlite3.SQLITE_CONSTRAINT_FOREIGNKEY:
			return fmt.Errorf("%w: %v", ErrReference, se)
		}
	}
	return err
}

// sqlTx and sqlRows adapt database/sql.
type sqlTx struct{ tx *sql.Tx }

func (t sqlTx) exec(ctx context.Context, q string, args ...any) error {
	_, err := t.tx.ExecContext(ctx, q, args...)
	return err
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
