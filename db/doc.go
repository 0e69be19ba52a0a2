// Package db stores Sluice's records: assays, compounds, fit runs with their
// provenance, API tokens (as hashes), the audit log and idempotency records.
//
// One Store interface has two engines: PostgreSQL through pgx/v5 (the
// production store, chosen by a postgres:// URL) and SQLite through
// modernc.org/sqlite (pure Go, the embedded default, a file in the data
// directory). Both run the same SQL text — modernc's SQLite accepts $n
// placeholders — and differ only where the engines do (timestamps, error
// codes, connection handling). Migrations are embedded and numbered, one
// directory per engine, applied by goose. Driver errors are translated here
// and nowhere else: ErrNotFound, ErrExists.
package db
