-- +goose Up
CREATE TABLE layouts (
    id         TEXT PRIMARY KEY,
    name       TEXT NOT NULL,
    format     INTEGER NOT NULL,
    wells      TEXT NOT NULL,
    created_at TEXT NOT NULL,
    created_by TEXT NOT NULL
);

CREATE TABLE plates (
    id           TEXT PRIMARY KEY,
    created_at   TEXT NOT NULL,
    submitted_by TEXT NOT NULL,
    assay_id     TEXT REFERENCES assays (id),
    barcode      TEXT NOT NULL,
    format       INTEGER NOT NULL,
    measured_at  TEXT,
    conc_unit    TEXT NOT NULL,
    mode         TEXT NOT NULL,
    settings     TEXT NOT NULL,
    input_sha256 TEXT NOT NULL,
    job_id       INTEGER,
    status       TEXT NOT NULL,
    qc           TEXT,
    curves_total INTEGER NOT NULL DEFAULT 0,
    curves_done  INTEGER NOT NULL DEFAULT 0,
    error        TEXT NOT NULL DEFAULT ''
);
CREATE INDEX plates_assay ON plates (assay_id, id);

CREATE TABLE wells (
    plate_id        TEXT NOT NULL REFERENCES plates (id),
    well            TEXT NOT NULL,
    row_index       INTEGER NOT NULL,
    col_index       INTEGER NOT NULL,
    role            TEXT NOT NULL,
    compound_id     TEXT NOT NULL DEFAULT '',
    conc            REAL NOT NULL DEFAULT 0,
    value           REAL,
    antagonist_id   TEXT NOT NULL DEFAULT '',
    antagonist_conc REAL NOT NULL DEFAULT 0,
    PRIMARY KEY (plate_id, well)
);

CREATE TABLE plate_curves (
    plate_id        TEXT NOT NULL REFERENCES plates (id),
    key             TEXT NOT NULL,
    compound_id     TEXT NOT NULL,
    antagonist_id   TEXT NOT NULL DEFAULT '',
    antagonist_conc REAL NOT NULL DEFAULT 0,
    status          TEXT NOT NULL,
    log_ec50        REAL,
    result          TEXT NOT NULL,
    PRIMARY KEY (plate_id, key)
);

-- +goose Down
DROP TABLE plate_curves;
DROP TABLE wells;
DROP TABLE plates;
DROP TABLE layouts;
