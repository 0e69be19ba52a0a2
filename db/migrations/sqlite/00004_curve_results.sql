-- +goose Up
-- One table of curve results for single fits (kind 'fit') and plate curves
-- (kind 'plate_curve'), so that "every curve of compound C in assay A by
-- experiment time" is one portable query. Rows are immutable: a re-fit is a
-- new row whose refit_of names the old one. Booleans are 0/1, timestamps
-- fixed-width UTC text, JSON documents text (checked by the store).
CREATE TABLE curve_results (
    id              TEXT PRIMARY KEY,
    kind            TEXT NOT NULL CHECK (kind IN ('fit', 'plate_curve')),
    plate_id        TEXT REFERENCES plates (id),
    curve_key       TEXT NOT NULL DEFAULT '',
    assay_id        TEXT REFERENCES assays (id),
    compound_id     TEXT,
    antagonist_id   TEXT NOT NULL DEFAULT '',
    antagonist_conc REAL NOT NULL DEFAULT 0,
    measured_at     TEXT NOT NULL,
    created_at      TEXT NOT NULL,
    submitted_by    TEXT NOT NULL,
    refit_of        TEXT REFERENCES curve_results (id),
    model           TEXT NOT NULL,
    status          TEXT NOT NULL,
    log_ec50        REAL,
    log_ec50_lo     REAL,
    log_ec50_hi     REAL,
    hill            REAL,
    hill_lo         REAL,
    hill_hi         REAL,
    top             REAL,
    top_lo          REAL,
    top_hi          REAL,
    bottom          REAL,
    bottom_lo       REAL,
    bottom_hi       REAL,
    engine_version  TEXT NOT NULL,
    input_sha256    TEXT NOT NULL,
    settings        TEXT NOT NULL,
    input           TEXT,
    result          TEXT NOT NULL,
    labels          TEXT NOT NULL DEFAULT '{}',
    params          TEXT NOT NULL DEFAULT '[]',
    boot_cols       INTEGER NOT NULL DEFAULT 0,
    boot_draws      BLOB,
    CHECK ((kind = 'fit') = (plate_id IS NULL)),
    UNIQUE (plate_id, curve_key)
);
CREATE INDEX curve_results_compound ON curve_results (compound_id, assay_id, measured_at, id);
CREATE INDEX curve_results_assay_compound ON curve_results (assay_id, compound_id, id);
CREATE INDEX curve_results_created_at ON curve_results (created_at);
CREATE TRIGGER curve_results_no_update BEFORE UPDATE ON curve_results
BEGIN SELECT RAISE(ABORT, 'stored curve results are immutable'); END;
CREATE TRIGGER curve_results_no_delete BEFORE DELETE ON curve_results
BEGIN SELECT RAISE(ABORT, 'stored curve results are immutable'); END;

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
    COALESCE((SELECT json_group_array(json_object('name', p.name, 'estimate', p.estimate, 'se', p.se,
            'wald_lo', p.wald_lo, 'wald_hi', p.wald_hi, 'boot_lo', p.boot_lo, 'boot_hi', p.boot_hi,
            'fixed', json(CASE WHEN p.fixed THEN 'true' ELSE 'false' END),
            'at_bound', json(CASE WHEN p.at_bound THEN 'true' ELSE 'false' END)) ORDER BY p.ord)
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
    COALESCE(json_extract(c.result, '$.model'), ''), c.status,
    c.log_ec50,
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.log_ec50.boot_ci') IS NULL THEN '$.params.log_ec50.wald_ci[0]' ELSE '$.params.log_ec50.boot_ci[0]' END),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.log_ec50.boot_ci') IS NULL THEN '$.params.log_ec50.wald_ci[1]' ELSE '$.params.log_ec50.boot_ci[1]' END),
    json_extract(c.result, '$.params.hill.estimate'),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.hill.boot_ci') IS NULL THEN '$.params.hill.wald_ci[0]' ELSE '$.params.hill.boot_ci[0]' END),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.hill.boot_ci') IS NULL THEN '$.params.hill.wald_ci[1]' ELSE '$.params.hill.boot_ci[1]' END),
    json_extract(c.result, '$.params.top.estimate'),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.top.boot_ci') IS NULL THEN '$.params.top.wald_ci[0]' ELSE '$.params.top.boot_ci[0]' END),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.top.boot_ci') IS NULL THEN '$.params.top.wald_ci[1]' ELSE '$.params.top.boot_ci[1]' END),
    json_extract(c.result, '$.params.bottom.estimate'),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.bottom.boot_ci') IS NULL THEN '$.params.bottom.wald_ci[0]' ELSE '$.params.bottom.boot_ci[0]' END),
    json_extract(c.result, CASE WHEN json_type(c.result, '$.params.bottom.boot_ci') IS NULL THEN '$.params.bottom.wald_ci[1]' ELSE '$.params.bottom.boot_ci[1]' END),
    COALESCE(json_extract(c.result, '$.engine_version'), ''), p.input_sha256, p.settings, NULL, c.result, '{}',
    COALESCE((SELECT json_group_array(json_object('name', e.key,
            'estimate', json_extract(e.value, '$.estimate'), 'se', json_extract(e.value, '$.se'),
            'wald_lo', json_extract(e.value, '$.wald_ci[0]'), 'wald_hi', json_extract(e.value, '$.wald_ci[1]'),
            'boot_lo', json_extract(e.value, '$.boot_ci[0]'), 'boot_hi', json_extract(e.value, '$.boot_ci[1]'),
            'fixed', json(CASE WHEN json_extract(e.value, '$.fixed') THEN 'true' ELSE 'false' END),
            'at_bound', json(CASE WHEN json_extract(e.value, '$.at_bound') THEN 'true' ELSE 'false' END)) ORDER BY e.id)
        FROM json_each(c.result, '$.params') AS e), '[]')
FROM plate_curves c JOIN plates p ON p.id = c.plate_id;

DROP TRIGGER fit_params_no_delete;
DROP TRIGGER fit_params_no_update;
DROP TRIGGER fit_runs_no_delete;
DROP TRIGGER fit_runs_no_update;
DROP TABLE plate_curves;
DROP TABLE fit_params;
DROP TABLE fit_runs;

-- The plate QC figures as columns, for control charts over an assay's
-- plates. signal_to_background is NULL with sb_unbounded = 1 when the min
-- controls average 0 (S/B = +Inf), and NULL with sb_unbounded = 0 when it
-- is undefined or not assessed.
ALTER TABLE plates ADD COLUMN z_prime REAL;
ALTER TABLE plates ADD COLUMN signal_window REAL;
ALTER TABLE plates ADD COLUMN signal_to_background REAL;
ALTER TABLE plates ADD COLUMN sb_unbounded INTEGER NOT NULL DEFAULT 0;
ALTER TABLE plates ADD COLUMN max_mean REAL;
ALTER TABLE plates ADD COLUMN max_cv REAL;
ALTER TABLE plates ADD COLUMN min_mean REAL;
ALTER TABLE plates ADD COLUMN min_cv REAL;
ALTER TABLE plates ADD COLUMN qc_pass INTEGER;
ALTER TABLE plates ADD COLUMN qc_reasons TEXT;
UPDATE plates SET
    z_prime = json_extract(qc, '$.z_prime'),
    signal_window = json_extract(qc, '$.signal_window'),
    signal_to_background = json_extract(qc, '$.signal_background'),
    max_cv = json_extract(qc, '$.cv.max_control'),
    min_cv = json_extract(qc, '$.cv.min_control'),
    qc_pass = json_extract(qc, '$.pass'),
    qc_reasons = COALESCE(json_extract(qc, '$.reasons'), '[]')
WHERE qc IS NOT NULL AND json_type(qc) = 'object';
CREATE INDEX plates_assay_measured ON plates (assay_id, COALESCE(measured_at, created_at));

-- +goose Down
-- There is no way back: the old tables cannot hold what curve_results
-- holds. SQLite has no RAISE outside a trigger, which makes this fail.
SELECT RAISE(ABORT, 'migration 4 (curve_results) cannot be undone');
