-- +goose Up
-- Assay drift (issue 12). A plate's reference-compound pEC50 joins its QC
-- figures as a column, so that every charted metric is one row per plate;
-- an assay may name its reference compound.
ALTER TABLE assays ADD COLUMN reference_compound_id TEXT REFERENCES compounds (id);
ALTER TABLE plates ADD COLUMN reference_pec50 DOUBLE PRECISION;

-- One row per charted (assay, metric): the baseline in force and the
-- chart's status after the latest evaluation. source is 'explicit' (mean
-- and SD given), 'plates' (estimated from the listed plates) or 'auto'
-- (from the first runs accepted plates), or 'standardised' (the r4s chart
-- of control z values); mean and sd are NULL while an auto baseline lacks
-- plates.
CREATE TABLE drift_charts (
    assay_id        TEXT NOT NULL REFERENCES assays (id),
    metric          TEXT NOT NULL,
    source          TEXT NOT NULL CHECK (source IN ('explicit', 'plates', 'auto', 'standardised')),
    baseline_mean   DOUBLE PRECISION,
    baseline_sd     DOUBLE PRECISION CHECK (baseline_sd > 0),
    baseline_runs   INTEGER NOT NULL DEFAULT 0,
    baseline_plates JSONB NOT NULL DEFAULT '[]',
    status          TEXT NOT NULL CHECK (status IN ('in_control', 'warning', 'out_of_control', 'no_baseline')),
    updated_at      TIMESTAMPTZ NOT NULL,
    updated_by      TEXT NOT NULL,
    PRIMARY KEY (assay_id, metric)
);

-- Every rule violation, recorded once (the key) with the baseline it was
-- judged against. Rows are immutable: a baseline change judges later
-- points afresh but never rewrites what was recorded.
CREATE TABLE drift_violations (
    assay_id        TEXT NOT NULL REFERENCES assays (id),
    metric          TEXT NOT NULL,
    plate_id        TEXT NOT NULL REFERENCES plates (id),
    rule            TEXT NOT NULL,
    measured_at     TIMESTAMPTZ NOT NULL,
    value           DOUBLE PRECISION NOT NULL,
    z               DOUBLE PRECISION NOT NULL,
    baseline_mean   DOUBLE PRECISION NOT NULL,
    baseline_sd     DOUBLE PRECISION NOT NULL,
    baseline_source TEXT NOT NULL,
    recorded_at     TIMESTAMPTZ NOT NULL,
    PRIMARY KEY (assay_id, metric, plate_id, rule)
);
CREATE INDEX drift_violations_latest ON drift_violations (assay_id, metric, measured_at);
CREATE TRIGGER drift_violations_immutable BEFORE UPDATE OR DELETE ON drift_violations
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();

-- +goose Down
DROP TABLE drift_violations;
DROP TABLE drift_charts;
ALTER TABLE plates DROP COLUMN reference_pec50;
ALTER TABLE assays DROP COLUMN reference_compound_id;
