// Package db stores Sluice's records: assays, compounds, curve results
// (single fits and plate curves in one table) with their provenance,
// plates and their QC figures, Schild runs, API tokens (as hashes), the
// audit log, idempotency records, and the job queue.
//
// One Store interface, composed of small ones by caller (store.go), has
// two engines: PostgreSQL through pgx/v5 (the production store, chosen by
// a postgres:// URL) and SQLite through modernc.org/sqlite (pure Go, the
// embedded default, a file in the data directory). Both run the same SQL
// text — modernc's SQLite accepts $n placeholders — and differ only where
// the engines do (timestamps, error codes, bulk loading). Every write is a
// real transaction on both (write.go). Migrations are embedded and
// numbered, one directory per engine, applied by goose under a lock
// (migrate.go). Driver errors are classified here and nowhere else, into
// *Error values wrapping ErrNotFound, ErrExists, ErrReference and
// ErrInvalid, with the same text on both engines.
package db
