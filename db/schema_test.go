package db_test

import (
	"context"
	"database/sql"
	"fmt"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/jackc/pgx/v5"

	"sluice/db"
)

// rawDB is a plain connection to a migrated store, for what the Store
// does not offer: the schema and statements the store never runs.
type rawDB struct {
	exec  func(q string) error
	query func(q string) ([][2]string, error)
}

// migratedSQLite migrates a fresh SQLite store and opens the file plainly.
func migratedSQLite(t *testing.T) rawDB {
	raw, _, _ := rawAt(t, "sqlite", 0)
	return raw
}

// migratedPostgres migrates a store in a fresh schema and connects to it.
func migratedPostgres(t *testing.T) rawDB {
	raw, _, _ := rawAt(t, "postgres", 0)
	return raw
}

// sqliteRaw opens the store's file in dir plainly.
func sqliteRaw(t *testing.T, dir string) rawDB {
	conn, err := sql.Open("sqlite", "file:"+filepath.Join(dir, db.SQLiteFile)+"?_pragma=foreign_keys(1)")
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close() })
	return rawDB{
		exec: func(q string) error { _, err := conn.Exec(q); return err },
		query: func(q string) ([][2]string, error) {
			rows, err := conn.Query(q)
			if err != nil {
				return nil, err
			}
			defer rows.Close()
			var out [][2]string
			for rows.Next() {
				var r [2]string
				if err := rows.Scan(&r[0], &r[1]); err != nil {
					return nil, err
				}
				out = append(out, r)
			}
			return out, rows.Err()
		},
	}
}

// pgRaw connects to the store at url plainly.
func pgRaw(t *testing.T, url string) rawDB {
	ctx := context.Background()
	conn, err := pgx.Connect(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { conn.Close(context.Background()) })
	return rawDB{
		exec: func(q string) error { _, err := conn.Exec(ctx, q); return err },
		query: func(q string) ([][2]string, error) {
			rows, err := conn.Query(ctx, q)
			if err != nil {
				return nil, err
			}
			return pgx.CollectRows(rows, func(r pgx.CollectableRow) ([2]string, error) {
				var v [2]string
				err := r.Scan(&v[0], &v[1])
				return v, err
			})
		},
	}
}

// Both engines have the same tables with the same columns (types differ
// by engine: TIMESTAMPTZ/TEXT, JSONB/TEXT, BYTEA/BLOB).
func TestSchemasMatch(t *testing.T) {
	lite := migratedSQLite(t)
	pg := migratedPostgres(t)
	ours := func(table string) bool {
		// River's own tables are River's business; goose's and SQLite's
		// bookkeeping differ by design.
		return !strings.HasPrefix(table, "river_") && table != "goose_db_version" && table != "sqlite_sequence"
	}
	list := func(rows [][2]string, err error) []string {
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for _, r := range rows {
			if ours(r[0]) {
				out = append(out, r[0]+"."+r[1])
			}
		}
		slices.Sort(out)
		return out
	}
	l := list(lite.query("SELECT m.name, p.name FROM sqlite_master m JOIN pragma_table_info(m.name) p WHERE m.type = 'table'"))
	p := list(pg.query("SELECT table_name::text, column_name::text FROM information_schema.columns WHERE table_schema = current_schema()"))
	if len(l) < 10 {
		t.Fatalf("only %d SQLite columns: %v", len(l), l)
	}
	if !slices.Equal(l, p) {
		t.Errorf("schemas differ:\nonly SQLite: %v\nonly PostgreSQL: %v", minus(l, p), minus(p, l))
	}
	idx := func(rows [][2]string, err error) []string {
		if err != nil {
			t.Fatal(err)
		}
		var out []string
		for _, r := range rows {
			if ours(r[0]) && !strings.HasPrefix(r[1], "sqlite_autoindex") && !strings.HasSuffix(r[1], "_pkey") && !strings.HasSuffix(r[1], "_key") {
				out = append(out, r[0]+"."+r[1])
			}
		}
		slices.Sort(out)
		return out
	}
	li := idx(lite.query("SELECT tbl_name, name FROM sqlite_master WHERE type = 'index'"))
	pi := idx(pg.query("SELECT tablename::text, indexname::text FROM pg_indexes WHERE schemaname = current_schema()"))
	if !slices.Equal(li, pi) {
		t.Errorf("indexes differ:\nonly SQLite: %v\nonly PostgreSQL: %v", minus(li, pi), minus(pi, li))
	}
}

func minus(a, b []string) []string {
	var out []string
	for _, x := range a {
		if !slices.Contains(b, x) {
			out = append(out, x)
		}
	}
	return out
}

// Stored results are immutable on both engines: the schema itself refuses
// UPDATE and DELETE, whoever connects.
func TestResultsImmutable(t *testing.T) {
	for name, open := range map[string]func(*testing.T) rawDB{"sqlite": migratedSQLite, "postgres": migratedPostgres} {
		t.Run(name, func(t *testing.T) {
			raw := open(t)
			for _, q := range []string{
				"INSERT INTO curve_results (id, kind, measured_at, created_at, submitted_by, model, status, engine_version, input_sha256, settings, input, result) " +
					"VALUES ('r1', 'fit', '2026-11-03T09:30:00.000000Z', '2026-11-03T09:30:00.000000Z', 'x', 'hill', 'converged', '0', '0', '{}', '{}', '{}')",
			} {
				if err := raw.exec(q); err != nil {
					t.Fatal(err)
				}
			}
			for _, q := range []string{"UPDATE curve_results SET status = 'x'", "DELETE FROM curve_results",
				"UPDATE curve_results SET hill = 2 WHERE id = 'r1'"} {
				if err := raw.exec(q); err == nil || !strings.Contains(err.Error(), "immutable") {
					t.Errorf("%s: %v, want the immutability trigger's refusal", q, err)
				}
			}
			rows, err := raw.query("SELECT id, status FROM curve_results")
			if err != nil || fmt.Sprint(rows) != "[[r1 converged]]" {
				t.Errorf("after the refused statements: %v %v", rows, err)
			}
		})
	}
}
