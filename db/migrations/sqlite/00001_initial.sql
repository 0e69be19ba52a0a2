-- +goose Up
-- Timestamps are fixed-width UTC text (2006-01-02T15:04:05.000000Z) so that
-- text order is time order.
CREATE TABLE assays (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL,
    target     TEXT NOT NULL DEFAULT '',
    readout    TEXT NOT NULL DEFAULT '',
    units      TEXT NOT NULL DEFAULT '',
    created_at TEXT NOT NULL,
    created_by TEXT NOT NULL DEFAULT ''
);

CREATE TABLE compounds (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL,
    target     TEXT NOT NULL DEFAULT '',
    readout    TEXT NOT NULL DEFAULT '',
    units      TEXT NOT NULL DEFAULT '',
    created_at TEXT NOT NULL,
    created_by TEXT NOT NULL DEFAULT ''
);

-- A fit run is immutable: a re-fit is a new row whose refit_of names the old.
CREATE TABLE fit_runs (
    id             TEXT PRIMARY KEY,
    created_at     TEXT NOT NULL,
    submitted_by   TEXT NOT NULL,
    assay_id       TEXT REFERENCES assays (id),
    compound_id    TEXT REFERENCES compounds (id),
    refit_of       TEXT REFERENCES fit_runs (id),
    model          TEXT NOT NULL,
    status         TEXT NOT NULL,
    log_ec50       REAL,
    engine_version TEXT NOT NULL,
    input_sha256   TEXT NOT NULL,
    settings       TEXT NOT NULL,
    input          TEXT NOT NULL,
    result         TEXT NOT NULL,
    labels         TEXT NOT NULL DEFAULT '{}'
);
CREATE INDEX fit_runs_assay_compound ON fit_runs (assay_id, compound_id, id);
CREATE INDEX fit_runs_created_at ON fit_runs (created_at);

CREATE TABLE fit_params (
    run_id   TEXT NOT NULL REFERENCES fit_runs (id),
    ord      INTEGER NOT NULL,
    name     TEXT NOT NULL,
    estimate REAL,
    se       REAL,
    wald_lo  REAL,
    wald_hi  REAL,
    boot_lo  REAL,
    boot_hi  REAL,
    fixed    INTEGER NOT NULL,
    at_bound INTEGER NOT NULL,
    PRIMARY KEY (run_id, ord)
);

CREATE TRIGGER fit_runs_no_update BEFORE UPDATE ON fit_runs
BEGIN SELECT RAISE(ABORT, 'stored fit runs are immutable'); END;
CREATE TRIGGER fit_runs_no_delete BEFORE DELETE ON fit_runs
BEGIN SELECT RAISE(ABORT, 'stored fit runs are immutable'); END;
CREATE TRIGGER fit_params_no_update BEFORE UPDATE ON fit_params
BEGIN SELECT RAISE(ABORT, 'stored fit runs are immutable'); END;
CREATE TRIGGER fit_params_no_delete BEFORE DELETE ON fit_params
BEGIN SELECT RAISE(ABORT, 'stored fit runs are immutable'); END;

CREATE TABLE api_tokens (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL UNIQUE,
    scope      TEXT NOT NULL CHECK (scope IN ('read', 'submit', 'admin')),
    hash       TEXT NOT NULL UNIQUE,
    created_at TEXT NOT NULL,
    revoked_at TEXT
);

CREATE TABLE audit_log (
    id     INTEGER PRIMARY KEY AUTOINCREMENT,
    at     TEXT NOT NULL,
    actor  TEXT NOT NULL,
    action TEXT NOT NULL,
    target TEXT NOT NULL,
    detail TEXT NOT NULL DEFAULT '{}'
);

CREATE TABLE idempotency_keys (
    actor          TEXT NOT NULL,
    key            TEXT NOT NULL,
    request_sha256 TEXT NOT NULL,
    status         INTEGER NOT NULL,
    content_type   TEXT NOT NULL,
    body           BLOB NOT NULL,
    created_at     TEXT NOT NULL,
    PRIMARY KEY (actor, key)
);

-- +goose Down
DROP TABLE idempotency_keys;
DROP TABLE audit_log;
DROP TABLE api_tokens;
DROP TRIGGER fit_params_no_delete;
DROP TRIGGER fit_params_no_update;
DROP TRIGGER fit_runs_no_delete;
DROP TRIGGER fit_runs_no_update;
DROP TABLE fit_params;
DROP TABLE fit_runs;
DROP TABLE compounds;
DROP TABLE assays;
