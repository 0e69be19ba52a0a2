package db

import (
	"context"
	"database/sql"
	"embed"
	"fmt"
	"io/fs"

	"github.com/pressly/goose/v3"
)

//go:embed migrations
var migrations embed.FS

// migrate applies the engine's embedded migrations with goose's provider
// (no global state), recording them in goose's version table.
func migrate(ctx context.Context, db *sql.DB, engine string) error {
	dialect := goose.DialectPostgres
	if engine == "sqlite" {
		dialect = goose.DialectSQLite3
	}
	dir, err := fs.Sub(migrations, "migrations/"+engine)
	if err != nil {
		return err
	}
	p, err := goose.NewProvider(dialect, db, dir)
	if err != nil {
		return fmt.Errorf("migrations: %w", err)
	}
	if _, err := p.Up(ctx); err != nil {
		return fmt.Errorf("migrations: %w", err)
	}
	return nil
}

// Open opens the store: PostgreSQL when url is a postgres:// URL, else the
// embedded SQLite file in dataDir. Migrations are applied either way.
func Open(ctx context.Context, url, dataDir string) (Store, error) {
	if url != "" {
		return openPostgres(ctx, url)
	}
	return openSQLite(ctx, dataDir)
}
