-- +goose Up
CREATE TABLE assays (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL,
    target     TEXT NOT NULL DEFAULT '',
    readout    TEXT NOT NULL DEFAULT '',
    units      TEXT NOT NULL DEFAULT '',
    created_at TIMESTAMPTZ NOT NULL,
    created_by TEXT NOT NULL DEFAULT ''
);

CREATE TABLE compounds (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL,
    target     TEXT NOT NULL DEFAULT '',
    readout    TEXT NOT NULL DEFAULT '',
    units      TEXT NOT NULL DEFAULT '',
    created_at TIMESTAMPTZ NOT NULL,
    created_by TEXT NOT NULL DEFAULT ''
);

-- A fit run is immutable: a re-fit is a new row whose refit_of names the old.
CREATE TABLE fit_runs (
    id             TEXT PRIMARY KEY,           -- UUIDv7, time-ordered
    created_at     TIMESTAMPTZ NOT NULL,
    submitted_by   TEXT NOT NULL,
    assay_id       TEXT REFERENCES assays (id),
    compound_id    TEXT REFERENCES compounds (id),
    refit_of       TEXT REFERENCES fit_runs (id),
    model          TEXT NOT NULL,
    status         TEXT NOT NULL,
    log_ec50       DOUBLE PRECISION,
    engine_version TEXT NOT NULL,
    input_sha256   TEXT NOT NULL,
    settings       JSONB NOT NULL,             -- as requested, with the bootstrap seed
    input          JSONB NOT NULL,             -- the points as submitted
    result         JSON NOT NULL,              -- the result object, byte for byte as returned
    labels         JSONB NOT NULL DEFAULT '{}'
);
CREATE INDEX fit_runs_assay_compound ON fit_runs (assay_id, compound_id, id);
CREATE INDEX fit_runs_created_at ON fit_runs (created_at);

CREATE TABLE fit_params (
    run_id   TEXT NOT NULL REFERENCES fit_runs (id),
    ord      INTEGER NOT NULL,
    name     TEXT NOT NULL,
    estimate DOUBLE PRECISION,
    se       DOUBLE PRECISION,
    wald_lo  DOUBLE PRECISION,
    wald_hi  DOUBLE PRECISION,
    boot_lo  DOUBLE PRECISION,
    boot_hi  DOUBLE PRECISION,
    fixed    BOOLEAN NOT NULL,
    at_bound BOOLEAN NOT NULL,
    PRIMARY KEY (run_id, ord)
);

-- +goose StatementBegin
CREATE FUNCTION sluice_immutable() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    RAISE EXCEPTION 'stored fit runs are immutable: % on %', TG_OP, TG_TABLE_NAME;
END;
$$;
-- +goose StatementEnd
CREATE TRIGGER fit_runs_immutable BEFORE UPDATE OR DELETE ON fit_runs
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();
CREATE TRIGGER fit_params_immutable BEFORE UPDATE OR DELETE ON fit_params
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();

CREATE TABLE api_tokens (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL UNIQUE,
    scope      TEXT NOT NULL CHECK (scope IN ('read', 'submit', 'admin')),
    hash       TEXT NOT NULL UNIQUE,               -- hex SHA-256 of the secret
    created_at TIMESTAMPTZ NOT NULL,
    revoked_at TIMESTAMPTZ
);

CREATE TABLE audit_log (
    id     BIGSERIAL PRIMARY KEY,
    at     TIMESTAMPTZ NOT NULL,
    actor  TEXT NOT NULL,
    action TEXT NOT NULL,
    target TEXT NOT NULL,
    detail JSONB NOT NULL DEFAULT '{}'
);

CREATE TABLE idempotency_keys (
    actor          TEXT NOT NULL,
    key            TEXT NOT NULL,
    request_sha256 TEXT NOT NULL,
    status         INTEGER NOT NULL,
    content_type   TEXT NOT NULL,
    body           BYTEA NOT NULL,
    created_at     TIMESTAMPTZ NOT NULL,
    PRIMARY KEY (actor, key)
);

-- +goose Down
DROP TABLE idempotency_keys;
DROP TABLE audit_log;
DROP TABLE api_tokens;
DROP TABLE fit_params;
DROP TABLE fit_runs;
DROP FUNCTION sluice_immutable();
DROP TABLE compounds;
DROP TABLE assays;
