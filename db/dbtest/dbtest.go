// Package dbtest gives tests a real, isolated store on either engine.
package dbtest

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"net/url"
	"os"
	"testing"

	"github.com/jackc/pgx/v5"

	"sluice/db"
)

// URLVar names the environment variable with the PostgreSQL test URL.
const URLVar = "SLUICE_TEST_DATABASE_URL"

// SQLite returns a store on a fresh SQLite file in a temporary directory.
func SQLite(t testing.TB) db.Store {
	t.Helper()
	s, err := db.Open(context.Background(), "", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(s.Close)
	return s
}

// Postgres returns a store in a schema of its own on the database named by
// SLUICE_TEST_DATABASE_URL, dropped when the test ends. Without the variable
// the test is skipped — except under CI (CI=true), where a missing or
// unreachable database fails the test.
func Postgres(t testing.TB) db.Store {
	t.Helper()
	s, err := db.Open(context.Background(), PostgresURL(t), "")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(s.Close)
	return s
}

// PostgresURL creates an empty schema of its own on the database named by
// SLUICE_TEST_DATABASE_URL, dropped when the test ends, and returns a URL
// whose search_path is that schema. It skips or fails as Postgres does.
func PostgresURL(t testing.TB) string {
	t.Helper()
	base := os.Getenv(URLVar)
	if base == "" {
		if os.Getenv("CI") == "true" {
			t.Fatalf("%s is not set; CI needs PostgreSQL", URLVar)
		}
		t.Skipf("%s is not set", URLVar)
	}
	ctx := context.Background()
	admin, err := pgx.Connect(ctx, base)
	if err != nil {
		t.Fatalf("PostgreSQL at %s: %v", URLVar, err)
	}
	defer admin.Close(ctx)
	var b [6]byte
	rand.Read(b[:])
	schema := "sluice_test_" + hex.EncodeToString(b[:])
	if _, err := admin.Exec(ctx, "CREATE SCHEMA "+schema); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		c, err := pgx.Connect(context.Background(), base)
		if err != nil {
			return
		}
		defer c.Close(context.Background())
		c.Exec(context.Background(), "DROP SCHEMA "+schema+" CASCADE")
	})
	u, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	q := u.Query()
	q.Set("search_path", schema)
	u.RawQuery = q.Encode()
	return u.String()
}

// Engines runs fn once per engine, as subtests "sqlite" and "postgres".
func Engines(t *testing.T, fn func(t *testing.T, s db.Store)) {
	t.Run("sqlite", func(t *testing.T) { fn(t, SQLite(t)) })
	t.Run("postgres", func(t *testing.T) { fn(t, Postgres(t)) })
}
