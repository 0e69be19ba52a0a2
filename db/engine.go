package db

import (
	"context"
	"database/sql"
	"fmt"
	"time"
)

// querier is what both engines offer a statement: the pool, or a
// transaction.
type querier interface {
	// exec runs a statement and returns the number of rows it touched.
	exec(ctx context.Context, q string, args ...any) (int64, error)
	queryRow(ctx context.Context, q string, args ...any) rowScanner
	query(ctx context.Context, q string, args ...any) (rowsScanner, error)
}

type rowScanner interface{ Scan(dest ...any) error }

type rowsScanner interface {
	Next() bool
	Scan(dest ...any) error
	Err() error
	Close()
}

// engine is one database behind the shared SQL of sqlStore.
type engine interface {
	querier
	inTx(ctx context.Context, fn func(querier) error) error
	ping(ctx context.Context) error
	stats() PoolStats
	close()
	name() string
	// classify returns the store's category of a driver error
	// (ErrNotFound, ErrExists, ErrReference, ErrInvalid), or nil when it
	// has none.
	classify(err error) error
	// timeArg encodes a timestamp as the engine stores it.
	timeArg(t time.Time) any
}

// dbTime scans a timestamp from either engine: a time.Time (PostgreSQL
// timestamptz) or the fixed-width UTC text SQLite stores.
type dbTime struct{ t time.Time }

func (d *dbTime) Scan(src any) error {
	switch v := src.(type) {
	case time.Time:
		d.t = v.UTC()
	case string:
		t, err := time.Parse(sqliteTime, v)
		if err != nil {
			return fmt.Errorf("timestamp %q: %w", v, err)
		}
		d.t = t
	case []byte:
		return d.Scan(string(v))
	case nil:
		d.t = time.Time{}
	default:
		return fmt.Errorf("timestamp: unexpected %T", src)
	}
	return nil
}

// sqliteTime is fixed-width so that text order is time order.
const sqliteTime = "2006-01-02T15:04:05.000000Z"

// nullString maps "" to SQL NULL.
func nullString(s string) any {
	if s == "" {
		return nil
	}
	return s
}

func deref(s *string) string {
	if s == nil {
		return ""
	}
	return *s
}

var _ sql.Scanner = (*dbTime)(nil)
