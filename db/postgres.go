package db

import (
	"context"
	"errors"
	"fmt"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/jackc/pgx/v5/stdlib"
	"github.com/riverqueue/river/riverdriver/riverpgxv5"
)

// pgEngine is PostgreSQL through a pgx pool.
type pgEngine struct {
	pool *pgxpool.Pool
}

// openPostgres connects a pool to url and applies the migrations. The pool
// comes from pgxpool.ParseConfig, so the URL's pool_* parameters apply.
func openPostgres(ctx context.Context, url string) (*sqlStore, error) {
	cfg, err := pgxpool.ParseConfig(url)
	if err != nil {
		return nil, fmt.Errorf("database URL: %w", err)
	}
	pool, err := pgxpool.NewWithConfig(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("connect to PostgreSQL: %w", err)
	}
	if err := pool.Ping(ctx); err != nil {
		pool.Close()
		return nil, fmt.Errorf("connect to PostgreSQL: %w", err)
	}
	// goose works on database/sql; open one over the same pool.
	sqlDB := stdlib.OpenDBFromPool(pool)
	err = migrate(ctx, sqlDB, "postgres")
	sqlDB.Close()
	if err != nil {
		pool.Close()
		return nil, err
	}
	q, err := newRiverQueue(ctx, riverpgxv5.New(pool), func(q querier) (pgx.Tx, bool) {
		t, ok := q.(pgTx)
		return t.tx, ok
	}, 200*time.Millisecond)
	if err != nil {
		pool.Close()
		return nil, err
	}
	return &sqlStore{e: &pgEngine{pool: pool}, q: q}, nil
}

func (e *pgEngine) exec(ctx context.Context, q string, args ...any) error {
	_, err := e.pool.Exec(ctx, q, args...)
	return err
}

func (e *pgEngine) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return e.pool.QueryRow(ctx, q, args...)
}

func (e *pgEngine) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	return e.pool.Query(ctx, q, args...)
}

// inTx runs fn atomically. A write that only executes statements (every
// Writer method today) is sent as one pipelined batch: PostgreSQL runs the
// statements before a Sync as one implicit transaction, rolled back whole on
// any error (PostgreSQL docs, "Pipelining" in the frontend/backend
// protocol), so the write costs one round trip instead of one per statement
// plus BEGIN and COMMIT. A write that reads is run again inside an explicit
// transaction.
func (e *pgEngine) inTx(ctx context.Context, fn func(querier) error) error {
	rec := &pgRecorder{}
	err := fn(rec)
	if err != nil && !errors.Is(err, errNeedsTx) {
		return err
	}
	if rec.read || errors.Is(err, errNeedsTx) {
		return pgx.BeginFunc(ctx, e.pool, func(tx pgx.Tx) error { return fn(pgTx{tx}) })
	}
	if rec.batch.Len() == 0 {
		return nil
	}
	return e.pool.SendBatch(ctx, &rec.batch).Close()
}

// errNeedsTx stops a recorded write that tries to read.
var errNeedsTx = errors.New("write reads: needs a transaction")

// pgRecorder queues a write's statements into a batch.
type pgRecorder struct {
	batch pgx.Batch
	read  bool
}

func (r *pgRecorder) exec(ctx context.Context, q string, args ...any) error {
	r.batch.Queue(q, args...)
	return nil
}

// copyWells bulk-loads wells with COPY.
func (t pgTx) copyWells(ctx context.Context, plateID string, wells []WellRow) error {
	rows := make([][]any, len(wells))
	for i, w := range wells {
		rows[i] = []any{plateID, w.Well, w.Row, w.Col, w.Role, w.CompoundID, w.Conc, w.Value, w.AntagonistID, w.AntagonistConc}
	}
	_, err := t.tx.CopyFrom(ctx, pgx.Identifier{"wells"},
		[]string{"plate_id", "well", "row_index", "col_index", "role", "compound_id", "conc", "value", "antagonist_id", "antagonist_conc"},
		pgx.CopyFromRows(rows))
	return err
}

func (r *pgRecorder) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	r.read = true
	return errRow{errNeedsTx}
}

func (r *pgRecorder) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	r.read = true
	return nil, errNeedsTx
}

type errRow struct{ err error }

func (r errRow) Scan(...any) error { return r.err }

func (e *pgEngine) ping(ctx context.Context) error { return e.pool.Ping(ctx) }
func (e *pgEngine) close()                         { e.pool.Close() }
func (e *pgEngine) name() string                   { return "postgres" }
func (e *pgEngine) timeArg(t time.Time) any        { return t.UTC() }

func (e *pgEngine) stats() PoolStats {
	s := e.pool.Stat()
	return PoolStats{Max: int(s.MaxConns()), Open: int(s.TotalConns()), InUse: int(s.AcquiredConns()), Idle: int(s.IdleConns())}
}

// translate maps pgx's errors and SQLSTATEs (PostgreSQL Appendix A) to the
// store's.
func (e *pgEngine) translate(err error) error {
	if err == nil {
		return nil
	}
	if errors.Is(err, pgx.ErrNoRows) {
		return fmt.Errorf("%w (%v)", ErrNotFound, err)
	}
	var pe *pgconn.PgError
	if errors.As(err, &pe) {
		switch pe.Code {
		case "23505": // unique_violation
			return fmt.Errorf("%w: %s", ErrExists, pe.Message)
		case "23503": // foreign_key_violation
			return fmt.Errorf("%w: %s", ErrReference, pe.Detail)
		}
	}
	return err
}

// pgTx adapts a transaction.
type pgTx struct{ tx pgx.Tx }

func (t pgTx) exec(ctx context.Context, q string, args ...any) error {
	_, err := t.tx.Exec(ctx, q, args...)
	return err
}

func (t pgTx) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return t.tx.QueryRow(ctx, q, args...)
}

func (t pgTx) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	return t.tx.Query(ctx, q, args...)
}
