-- +goose Up
-- One table of curve results for single fits (kind 'fit') and plate curves
-- (kind 'plate_curve'), so that "every curve of compound C in assay A by
-- experiment time" is one portable query. Rows are immutable: a re-fit is a
-- new row whose refit_of names the old one.
CREATE TABLE curve_results (
    id              TEXT PRIMARY KEY,   -- a fit: its UUIDv7; a plate curve: given, or plate_id:curve_key
    kind            TEXT NOT NULL CHECK (kind IN ('fit', 'plate_curve')),
    plate_id        TEXT REFERENCES plates (id),
    curve_key       TEXT NOT NULL DEFAULT '',
    assay_id        TEXT REFERENCES assays (id),
    compound_id     TEXT,
    antagonist_id   TEXT NOT NULL DEFAULT '',
    antagonist_conc DOUBLE PRECISION NOT NULL DEFAULT 0,
    measured_at     TIMESTAMPTZ NOT NULL,   -- experiment time: the plate's, or the fit's upload time
    created_at      TIMESTAMPTZ NOT NULL,
    submitted_by    TEXT NOT NULL,
    refit_of        TEXT REFERENCES curve_results (id),
    model           TEXT NOT NULL,
    status          TEXT NOT NULL,
    -- The main estimates; _lo/_hi is the bootstrap interval when the curve
    -- was bootstrapped, else the Wald interval. NULL when not estimated.
    log_ec50        DOUBLE PRECISION,
    log_ec50_lo     DOUBLE PRECISION,
    log_ec50_hi     DOUBLE PRECISION,
    hill            DOUBLE PRECISION,
    hill_lo         DOUBLE PRECISION,
    hill_hi         DOUBLE PRECISION,
    top             DOUBLE PRECISION,
    top_lo          DOUBLE PRECISION,
    top_hi          DOUBLE PRECISION,
    bottom          DOUBLE PRECISION,
    bottom_lo       DOUBLE PRECISION,
    bottom_hi       DOUBLE PRECISION,
    engine_version  TEXT NOT NULL,
    input_sha256    TEXT NOT NULL,
    settings        JSONB NOT NULL,         -- as requested, with the bootstrap seed
    input           JSONB,                  -- a fit's points as submitted; NULL for a plate curve (its input is the wells)
    result          JSON NOT NULL,          -- the result object, byte for byte as returned
    labels          JSONB NOT NULL DEFAULT '{}',
    params          JSONB NOT NULL DEFAULT '[]',  -- every parameter: [{name, estimate, se, wald_lo, …}]
    boot_cols       INTEGER NOT NULL DEFAULT 0,   -- parameters per bootstrap draw
    boot_draws      BYTEA,                  -- B × boot_cols float64, little-endian, row by row
    CHECK ((kind = 'fit') = (plate_id IS NULL)),
    UNIQUE (plate_id, curve_key)
);
CREATE INDEX curve_results_compound ON curve_results (compound_id, assay_id, measured_at, id);
CREATE INDEX curve_results_assay_compound ON curve_results (assay_id, compound_id, id);
CREATE INDEX curve_results_created_at ON curve_results (created_at);
CREATE TRIGGER curve_results_immutable BEFORE UPDATE OR DELETE ON curve_results
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();

INSERT INTO curve_results (id, kind, plate_id, curve_key, assay_id, compound_id, antagonist_id, antagonist_conc,
    measured_at, created_at, submitted_by, refit_of, model, status,
    log_ec50, log_ec50_lo, log_ec50_hi, hill, hill_lo, hill_hi, top, top_lo, top_hi, bottom, bottom_lo, bottom_hi,
    engine_version, input_sha256, settings, input, result, labels, params)
SELECT r.id, 'fit', NULL, '', r.assay_id, r.compound_id, '', 0,
    r.created_at, r.created_at, r.submitted_by, r.refit_of, r.model, r.status,
    r.log_ec50,
    CASE WHEN l.boot_lo IS NULL AND l.boot_hi IS NULL THEN l.wald_lo ELSE l.boot_lo END,
    CASE WHEN l.boot_lo IS NULL AND l.boot_hi IS NULL THEN l.wald_hi ELSE l.boot_hi END,
    h.estimate,
    CASE WHEN h.boot_lo IS NULL AND h.boot_hi IS NULL THEN h.wald_lo ELSE h.boot_lo END,
    CASE WHEN h.boot_lo IS NULL AND h.boot_hi IS NULL THEN h.wald_hi ELSE h.boot_hi END,
    t.estimate,
    CASE WHEN t.boot_lo IS NULL AND t.boot_hi IS NULL THEN t.wald_lo ELSE t.boot_lo END,
    CASE WHEN t.boot_lo IS NULL AND t.boot_hi IS NULL THEN t.wald_hi ELSE t.boot_hi END,
    b.estimate,
    CASE WHEN b.boot_lo IS NULL AND b.boot_hi IS NULL THEN b.wald_lo ELSE b.boot_lo END,
    CASE WHEN b.boot_lo IS NULL AND b.boot_hi IS NULL THEN b.wald_hi ELSE b.boot_hi END,
    r.engine_version, r.input_sha256, r.settings, r.input, r.result, r.labels,
    COALESCE((SELECT jsonb_agg(jsonb_build_object('name', p.name, 'estimate', p.estimate, 'se', p.se,
            'wald_lo', p.wald_lo, 'wald_hi', p.wald_hi, 'boot_lo', p.boot_lo, 'boot_hi', p.boot_hi,
            'fixed', p.fixed, 'at_bound', p.at_bound) ORDER BY p.ord)
        FROM fit_params p WHERE p.run_id = r.id), '[]')
FROM fit_runs r
LEFT JOIN fit_params l ON l.run_id = r.id AND l.name = 'log_ec50'
LEFT JOIN fit_params h ON h.run_id = r.id AND h.name = 'hill'
LEFT JOIN fit_params t ON t.run_id = r.id AND t.name = 'top'
LEFT JOIN fit_params b ON b.run_id = r.id AND b.name = 'bottom';

-- Plate curves: the estimates come from their result objects, where a
-- parameter is {"estimate", "se", "wald_ci": [lo, hi], "boot_ci": [lo, hi]
-- (only when bootstrapped), "fixed", "at_bound"}.
INSERT INTO curve_results (id, kind, plate_id, curve_key, assay_id, compound_id, antagonist_id, antagonist_conc,
    measured_at, created_at, submitted_by, refit_of, model, status,
    log_ec50, log_ec50_lo, log_ec50_hi, hill, hill_lo, hill_hi, top, top_lo, top_hi, bottom, bottom_lo, bottom_hi,
    engine_version, input_sha256, settings, input, result, labels, params)
SELECT c.plate_id || ':' || c.key, 'plate_curve', c.plate_id, c.key, p.assay_id, c.compound_id, c.antagonist_id, c.antagonist_conc,
    COALESCE(p.measured_at, p.created_at), p.created_at, p.submitted_by, NULL,
    COALESCE(c.result::json ->> 'model', ''), c.status,
    c.log_ec50,
    (COALESCE(c.result::json #> '{params,log_ec50,boot_ci}', c.result::json #> '{params,log_ec50,wald_ci}') ->> 0)::float8,
    (COALESCE(c.result::json #> '{params,log_ec50,boot_ci}', c.result::json #> '{params,log_ec50,wald_ci}') ->> 1)::float8,
    (c.result::json #>> '{params,hill,estimate}')::float8,
    (COALESCE(c.result::json #> '{params,hill,boot_ci}', c.result::json #> '{params,hill,wald_ci}') ->> 0)::float8,
    (COALESCE(c.result::json #> '{params,hill,boot_ci}', c.result::json #> '{params,hill,wald_ci}') ->> 1)::float8,
    (c.result::json #>> '{params,top,estimate}')::float8,
    (COALESCE(c.result::json #> '{params,top,boot_ci}', c.result::json #> '{params,top,wald_ci}') ->> 0)::float8,
    (COALESCE(c.result::json #> '{params,top,boot_ci}', c.result::json #> '{params,top,wald_ci}') ->> 1)::float8,
    (c.result::json #>> '{params,bottom,estimate}')::float8,
    (COALESCE(c.result::json #> '{params,bottom,boot_ci}', c.result::json #> '{params,bottom,wald_ci}') ->> 0)::float8,
    (COALESCE(c.result::json #> '{params,bottom,boot_ci}', c.result::json #> '{params,bottom,wald_ci}') ->> 1)::float8,
    COALESCE(c.result::json ->> 'engine_version', ''), p.input_sha256, p.settings, NULL, c.result, '{}',
    COALESCE((SELECT jsonb_agg(jsonb_build_object('name', e.key,
            'estimate', (e.value ->> 'estimate')::float8, 'se', (e.value ->> 'se')::float8,
            'wald_lo', (e.value #>> '{wald_ci,0}')::float8, 'wald_hi', (e.value #>> '{wald_ci,1}')::float8,
            'boot_lo', (e.value #>> '{boot_ci,0}')::float8, 'boot_hi', (e.value #>> '{boot_ci,1}')::float8,
            'fixed', COALESCE((e.value ->> 'fixed')::boolean, false),
            'at_bound', COALESCE((e.value ->> 'at_bound')::boolean, false)) ORDER BY e.ord)
        FROM json_each(c.result::json -> 'params') WITH ORDINALITY AS e(key, value, ord)), '[]')
FROM plate_curves c JOIN plates p ON p.id = c.plate_id;

DROP TABLE plate_curves;
DROP TABLE fit_params;
DROP TABLE fit_runs;

-- The plate QC figures as columns, for control charts over an assay's
-- plates. signal_to_background is NULL with sb_unbounded = true when the min
-- controls average 0 (S/B = +Inf), and NULL with sb_unbounded = false when
-- it is undefined or not assessed.
ALTER TABLE plates ADD COLUMN z_prime DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN signal_window DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN signal_to_background DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN sb_unbounded BOOLEAN NOT NULL DEFAULT FALSE;
ALTER TABLE plates ADD COLUMN max_mean DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN max_cv DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN min_mean DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN min_cv DOUBLE PRECISION;
ALTER TABLE plates ADD COLUMN qc_pass BOOLEAN;
ALTER TABLE plates ADD COLUMN qc_reasons JSONB;
UPDATE plates SET
    z_prime = (qc ->> 'z_prime')::float8,
    signal_window = (qc ->> 'signal_window')::float8,
    signal_to_background = (qc ->> 'signal_background')::float8,
    max_cv = (qc #>> '{cv,max_control}')::float8,
    min_cv = (qc #>> '{cv,min_control}')::float8,
    qc_pass = (qc ->> 'pass')::boolean,
    qc_reasons = CASE WHEN json_typeof(qc -> 'reasons') = 'array' THEN (qc -> 'reasons')::jsonb ELSE '[]' END
WHERE qc IS NOT NULL AND json_typeof(qc) = 'object';
CREATE INDEX plates_assay_measured ON plates (assay_id, (COALESCE(measured_at, created_at)));

-- +goose Down
-- There is no way back: the old tables cannot hold what curve_results holds.
-- +goose StatementBegin
DO $$ BEGIN RAISE EXCEPTION 'migration 4 (curve_results) cannot be undone'; END $$;
-- +goose StatementEnd
