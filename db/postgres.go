package db

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgconn"
	"github.com/jackc/pgx/v5/pgxpool"
	"github.com/jackc/pgx/v5/stdlib"
	"github.com/riverqueue/river/riverdriver"
	"github.com/riverqueue/river/riverdriver/riverpgxv5"
)

// pgEngine is PostgreSQL through a pgx pool.
type pgEngine struct {
	pool *pgxpool.Pool
	// group commits the writes that sent nothing before COMMIT
	// (groupcommit.go).
	group *groupCommitter
	// timeout bounds every call (Options.CallTimeout).
	timeout time.Duration
}

// openPostgres connects a pool to url and migrates (or checks) the schema.
// The pool comes from pgxpool.ParseConfig, so the URL's pool_* parameters
// apply.
func openPostgres(ctx context.Context, url string, o Options) (*sqlStore, error) {
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
	driver := riverpgxv5.New(pool)
	if err := pgMigrate(ctx, pool, driver, o); err != nil {
		pool.Close()
		return nil, err
	}
	q, err := newRiverQueue(ctx, driver, func(ctx context.Context, q querier) (pgx.Tx, error) {
		t, ok := q.(*pgTx)
		if !ok {
			return nil, errors.New("enqueue outside a transaction")
		}
		return t.pgxTx(ctx)
	}, 200*time.Millisecond, o)
	if err != nil {
		pool.Close()
		return nil, err
	}
	e := &pgEngine{pool: pool, timeout: o.callTimeout()}
	e.group = newGroupCommitter(pool, e.classify, groupCommitters)
	return &sqlStore{e: e, q: q, timeout: o.callTimeout()}, nil
}

// migrationLock is the key of the PostgreSQL advisory lock held while
// migrating: the first 8 bytes of SHA-256("sluice migrations") as a signed
// integer. It is per database, so schemas of one database (the tests')
// migrate one at a time too.
const migrationLock int64 = 0x0e5f050d9de802a5

// pgMigrate runs the migrator under a session-level advisory lock
// (pg_advisory_lock, PostgreSQL documentation §9.28.10) held on one
// connection of the pool, so that replicas starting together migrate one
// after the other and the later ones find nothing to do. Checking alone
// takes no lock.
func pgMigrate(ctx context.Context, pool *pgxpool.Pool, driver riverdriver.Driver[pgx.Tx], o Options) error {
	// goose works on database/sql; open one over the same pool.
	sqlDB := stdlib.OpenDBFromPool(pool)
	defer sqlDB.Close()
	m := migrator[pgx.Tx]{db: sqlDB, engine: "postgres", river: driver}
	if o.SkipMigrations {
		return m.check(ctx)
	}
	conn, err := pool.Acquire(ctx)
	if err != nil {
		return fmt.Errorf("migrations: %w", err)
	}
	defer conn.Release()
	if _, err := conn.Exec(ctx, "SELECT pg_advisory_lock($1)", migrationLock); err != nil {
		return fmt.Errorf("migrations: lock: %w", err)
	}
	defer conn.Exec(context.WithoutCancel(ctx), "SELECT pg_advisory_unlock($1)", migrationLock)
	return m.up(ctx, o.to)
}

// exec, queryRow and query each run under a call deadline of their own
// (deadline.go); pgx's default context handler sets the connection's
// deadline when it passes, so even a peer that never answers lets go.
func (e *pgEngine) exec(ctx context.Context, q string, args ...any) (int64, error) {
	return boundExec(ctx, deadline(e.timeout), func(ctx context.Context) (int64, error) {
		tag, err := e.pool.Exec(ctx, q, args...)
		return tag.RowsAffected(), err
	})
}

func (e *pgEngine) queryRow(ctx context.Context, q string, args ...any) rowScanner {
	return boundQueryRow(ctx, deadline(e.timeout), func(ctx context.Context) rowScanner { return e.pool.QueryRow(ctx, q, args...) })
}

func (e *pgEngine) query(ctx context.Context, q string, args ...any) (rowsScanner, error) {
	return boundQuery(ctx, deadline(e.timeout), func(ctx context.Context) (rowsScanner, error) { return e.pool.Query(ctx, q, args...) })
}

// inTx runs fn in one transaction (BEGIN … COMMIT), rolled back when fn
// returns an error, pipelined to save round trips (pgTx). Each statement
// that answers something (rows touched, rows read) reaches fn with its
// error as it happens; bulk rows go out in one round trip inside it (COPY
// for wells, a pipelined batch for curves). A write that sent nothing
// before COMMIT is committed with others waiting at that moment, in one
// transaction (groupcommit.go). The transaction, every statement in it
// included, ends within one call deadline.
func (e *pgEngine) inTx(ctx context.Context, fn func(querier) error) error {
	at := deadline(e.timeout)
	ctx, cancel := within(ctx, at)
	defer cancel()
	t := &pgTx{pool: e.pool, at: at, classify: e.classify}
	defer t.release()
	if err := fn(t); err != nil {
		t.rollback(ctx)
		return err // fn's own, classified by the statement that failed
	}
	if t.tx == nil && len(t.held) > 0 {
		return e.group.commit(ctx, t.held)
	}
	if err := t.commit(ctx); err != nil {
		t.rollback(ctx)
		return timedOut(ctx, err)
	}
	return nil
}

func (e *pgEngine) ping(ctx context.Context) error {
	ctx, cancel := within(ctx, deadline(e.timeout))
	defer cancel()
	return timedOut(ctx, e.pool.Ping(ctx))
}

func (e *pgEngine) close() {
	e.group.stop()
	e.pool.Close()
}
func (e *pgEngine) name() string            { return "postgres" }
func (e *pgEngine) timeArg(t time.Time) any { return t.UTC() }

func (e *pgEngine) stats() PoolStats {
	s := e.pool.Stat()
	return PoolStats{Max: int(s.MaxConns()), Open: int(s.TotalConns()), InUse: int(s.AcquiredConns()), Idle: int(s.IdleConns())}
}

// classify maps pgx's errors and SQLSTATEs (PostgreSQL documentation,
// Appendix A, "PostgreSQL Error Codes") to the store's categories. A
// failed connection attempt (pgconn.ConnectError: refused, the server
// starting up, too many clients) and a lost connection are ErrUnavailable.
func (e *pgEngine) classify(err error) error {
	if errors.Is(err, pgx.ErrNoRows) {
		return ErrNotFound
	}
	var ce *pgconn.ConnectError
	if unreachable(err) || errors.As(err, &ce) {
		return ErrUnavailable
	}
	var pe *pgconn.PgError
	if !errors.As(err, &pe) {
		return nil
	}
	switch {
	case strings.HasPrefix(pe.Code, "08"): // class 08, connection exception
		return ErrUnavailable
	case pe.Code == "57P01", pe.Code == "57P02", pe.Code == "57P03": // admin_shutdown, crash_shutdown, cannot_connect_now
		return ErrUnavailable
	case pe.Code == "53300": // too_many_connections: the server is full, not the request at fault
		return ErrUnavailable
	case pe.Code == "23505": // unique_violation
		return ErrExists
	case pe.Code == "23503": // foreign_key_violation
		return ErrReference
	case pe.Code == "23502", pe.Code == "23514": // not_null_violation, check_violation
		return ErrInvalid
	case strings.HasPrefix(pe.Code, "22"): // class 22, data exception
		return ErrInvalid
	}
	return nil
}
