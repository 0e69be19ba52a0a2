-- +goose Up
CREATE TABLE layouts (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL,
    format     INTEGER NOT NULL,
    wells      JSONB NOT NULL,          -- [{well, role, compound_id, conc, antagonist_id, antagonist_conc}]
    created_at TIMESTAMPTZ NOT NULL,
    created_by TEXT NOT NULL
);

CREATE TABLE plates (
    id           TEXT PRIMARY KEY,      -- UUIDv7
    created_at   TIMESTAMPTZ NOT NULL,
    submitted_by TEXT NOT NULL,
    assay_id     TEXT REFERENCES assays (id),
    barcode      TEXT NOT NULL,
    format       INTEGER NOT NULL,
    measured_at  TIMESTAMPTZ,
    conc_unit    TEXT NOT NULL,
    mode         TEXT NOT NULL,
    settings     JSONB NOT NULL,        -- fit settings, with the bootstrap seed
    input_sha256 TEXT NOT NULL,
    job_id       BIGINT,
    status       TEXT NOT NULL,         -- queued, running, done, failed
    qc           JSON,
    curves_total INTEGER NOT NULL DEFAULT 0,
    curves_done  INTEGER NOT NULL DEFAULT 0,
    error        TEXT NOT NULL DEFAULT ''
);
CREATE INDEX plates_assay ON plates (assay_id, id);

CREATE TABLE wells (
    plate_id        TEXT NOT NULL REFERENCES plates (id),
    well            TEXT NOT NULL,      -- canonical: A01 … AF48
    row_index       INTEGER NOT NULL,
    col_index       INTEGER NOT NULL,
    role            TEXT NOT NULL,
    compound_id     TEXT NOT NULL DEFAULT '',
    conc            DOUBLE PRECISION NOT NULL DEFAULT 0,   -- molar
    value           DOUBLE PRECISION,                       -- raw reading
    antagonist_id   TEXT NOT NULL DEFAULT '',
    antagonist_conc DOUBLE PRECISION NOT NULL DEFAULT 0,
    PRIMARY KEY (plate_id, well)
);

CREATE TABLE plate_curves (
    plate_id        TEXT NOT NULL REFERENCES plates (id),
    key             TEXT NOT NULL,
    compound_id     TEXT NOT NULL,
    antagonist_id   TEXT NOT NULL DEFAULT '',
    antagonist_conc DOUBLE PRECISION NOT NULL DEFAULT 0,
    status          TEXT NOT NULL,
    log_ec50        DOUBLE PRECISION,
    result          JSON NOT NULL,
    PRIMARY KEY (plate_id, key)
);

-- +goose Down
DROP TABLE plate_curves;
DROP TABLE wells;
DROP TABLE plates;
DROP TABLE layouts;
