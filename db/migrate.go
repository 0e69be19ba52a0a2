package db

import (
	"context"
	"database/sql"
	"embed"
	"fmt"
	"io/fs"
	"log/slog"
	"strings"
	"time"

	"github.com/pressly/goose/v3"
	"github.com/riverqueue/river/riverdriver"
	"github.com/riverqueue/river/rivermigrate"
)

//go:embed migrations
var migrations embed.FS

// Options tune OpenWith.
type Options struct {
	// SkipMigrations opens the store without applying migrations (API
	// replicas, `sluice serve --migrate=false`); the store must then be at
	// the latest version already, or OpenWith fails saying to run `sluice
	// migrate`. The zero value migrates, as Open does.
	SkipMigrations bool

	// JobTimeout is the ceiling of a job's own timeout (JobOpts.Timeout)
	// and the timeout of a job queued without one; range [MinJobTimeout,
	// 24h]. RescueAfter is how long a job's attempt may run before River
	// takes the job for orphaned (its worker died) and retries it
	// elsewhere — never before the job's own timeout has passed as well,
	// so a job still being worked does not run twice; range 1s–24h. Zero
	// means the defaults, DefaultJobTimeout (10 min) and
	// DefaultRescueAfter (1 min); RescueBound says when an orphaned job is
	// released.
	JobTimeout, RescueAfter time.Duration

	// CallTimeout bounds every call to the database: one read, or one
	// Write's transaction with all its statements. A call still running
	// at its deadline is cancelled and fails with ErrUnavailable (the API
	// answers 503), so that a frozen database never holds a caller
	// forever; a SQLite writer also waits for another's lock at most this
	// long. Zero means DefaultCallTimeout (15 s); range MinCallTimeout
	// (100 ms) to MaxCallTimeout (10 min). Migrations and the job queue's
	// own housekeeping are not bounded by it (River has its own timeouts).
	CallTimeout time.Duration

	// Logger receives the job queue's (River's) logs, so that they join
	// the service's own (JSON in `sluice serve`). Nil means River's
	// default: text on standard output.
	Logger *slog.Logger

	// to is the version Migrate migrates to; 0 means the latest.
	to int64
}

// callTimeout is CallTimeout or its default.
func (o Options) callTimeout() time.Duration {
	if o.CallTimeout == 0 {
		return DefaultCallTimeout
	}
	return o.CallTimeout
}

// Open opens the store: PostgreSQL when url is a postgres:// URL, else the
// embedded SQLite file in dataDir. Migrations are applied either way.
func Open(ctx context.Context, url, dataDir string) (Store, error) {
	return OpenWith(ctx, url, dataDir, Options{})
}

// OpenWith opens the store as Open does, with options.
func OpenWith(ctx context.Context, url, dataDir string, o Options) (Store, error) {
	if url != "" {
		return openPostgres(ctx, url, o)
	}
	return openSQLite(ctx, dataDir, o)
}

// Migrate applies the store's migrations (Sluice's, then the job queue's)
// up to version to (0: the latest) and returns. On PostgreSQL it holds an
// advisory lock meanwhile, so replicas that start together migrate one
// after the other; SQLite is one process's file with one writer at a time,
// and takes no lock beyond its own.
func Migrate(ctx context.Context, url, dataDir string, to int64) error {
	s, err := OpenWith(ctx, url, dataDir, Options{to: to})
	if err != nil {
		return err
	}
	s.Close()
	return nil
}

// migrator applies one engine's migrations.
type migrator[TTx any] struct {
	db     *sql.DB // for goose, which works on database/sql
	engine string  // "postgres" or "sqlite": the migrations directory
	river  riverdriver.Driver[TTx]
}

func (m migrator[TTx]) goose() (*goose.Provider, error) {
	dialect := goose.DialectPostgres
	if m.engine == "sqlite" {
		dialect = goose.DialectSQLite3
	}
	dir, err := fs.Sub(migrations, "migrations/"+m.engine)
	if err != nil {
		return nil, err
	}
	// The provider holds no global state, unlike goose's package functions.
	p, err := goose.NewProvider(dialect, m.db, dir)
	if err != nil {
		return nil, fmt.Errorf("migrations: %w", err)
	}
	return p, nil
}

// up applies Sluice's migrations up to version to (0: all), then River's.
// The caller holds the migration lock.
func (m migrator[TTx]) up(ctx context.Context, to int64) error {
	p, err := m.goose()
	if err != nil {
		return err
	}
	if to > 0 {
		_, err = p.UpTo(ctx, to)
	} else {
		_, err = p.Up(ctx)
	}
	if err != nil {
		return fmt.Errorf("migrations: %w", err)
	}
	rm, err := rivermigrate.New(m.river, nil)
	if err != nil {
		return fmt.Errorf("job queue migrations: %w", err)
	}
	if _, err := rm.Migrate(ctx, rivermigrate.DirectionUp, nil); err != nil {
		return fmt.Errorf("job queue migrations: %w", err)
	}
	return nil
}

// prepare migrates (o.SkipMigrations false) or checks that nothing is
// pending (true).
func (m migrator[TTx]) prepare(ctx context.Context, o Options) error {
	if o.SkipMigrations {
		return m.check(ctx)
	}
	return m.up(ctx, o.to)
}

// check fails unless every migration of both has been applied.
func (m migrator[TTx]) check(ctx context.Context) error {
	p, err := m.goose()
	if err != nil {
		return err
	}
	current, target, err := p.GetVersions(ctx)
	if err != nil {
		return fmt.Errorf("migrations: %w", err)
	}
	if current < target {
		return fmt.Errorf("the %s store is at migration %d and this version of Sluice needs %d: run `sluice migrate`", m.engine, current, target)
	}
	rm, err := rivermigrate.New(m.river, nil)
	if err != nil {
		return fmt.Errorf("job queue migrations: %w", err)
	}
	res, err := rm.Validate(ctx, nil)
	if err != nil {
		return fmt.Errorf("job queue migrations: %w", err)
	}
	if !res.OK {
		return fmt.Errorf("the job queue's tables need migrations (%s): run `sluice migrate`", strings.Join(res.Messages, "; "))
	}
	return nil
}
