-- +goose Up
-- Assay drift (issue 12); see the PostgreSQL migration.
ALTER TABLE assays ADD COLUMN reference_compound_id TEXT REFERENCES compounds (id);
ALTER TABLE plates ADD COLUMN reference_pec50 REAL;

CREATE TABLE drift_charts (
    assay_id        TEXT NOT NULL REFERENCES assays (id),
    metric          TEXT NOT NULL,
    source          TEXT NOT NULL CHECK (source IN ('explicit', 'plates', 'auto', 'standardised')),
    baseline_mean   REAL,
    baseline_sd     REAL CHECK (baseline_sd > 0),
    baseline_runs   INTEGER NOT NULL DEFAULT 0,
    baseline_plates TEXT NOT NULL DEFAULT '[]',
    status          TEXT NOT NULL CHECK (status IN ('in_control', 'warning', 'out_of_control', 'no_baseline')),
    updated_at      TEXT NOT NULL,
    updated_by      TEXT NOT NULL,
    PRIMARY KEY (assay_id, metric)
);

CREATE TABLE drift_violations (
    assay_id        TEXT NOT NULL REFERENCES assays (id),
    metric          TEXT NOT NULL,
    plate_id        TEXT NOT NULL REFERENCES plates (id),
    rule            TEXT NOT NULL,
    measured_at     TEXT NOT NULL,
    value           REAL NOT NULL,
    z               REAL NOT NULL,
    baseline_mean   REAL NOT NULL,
    baseline_sd     REAL NOT NULL,
    baseline_source TEXT NOT NULL,
    recorded_at     TEXT NOT NULL,
    PRIMARY KEY (assay_id, metric, plate_id, rule)
);
CREATE INDEX drift_violations_latest ON drift_violations (assay_id, metric, measured_at);
CREATE TRIGGER drift_violations_no_update BEFORE UPDATE ON drift_violations
BEGIN SELECT RAISE(ABORT, 'recorded drift violations are immutable'); END;
CREATE TRIGGER drift_violations_no_delete BEFORE DELETE ON drift_violations
BEGIN SELECT RAISE(ABORT, 'recorded drift violations are immutable'); END;

-- +goose Down
DROP TABLE drift_violations;
DROP TABLE drift_charts;
ALTER TABLE plates DROP COLUMN reference_pec50;
ALTER TABLE assays DROP COLUMN reference_compound_id;
