-- +goose Up
-- Potency histories: review events and refit exclusions are rows of their
-- own that point at the immutable curve results; replicate-experiment MSR
-- studies are stored as asked and answered.
CREATE TABLE curve_reviews (
    id          TEXT PRIMARY KEY,
    curve_id    TEXT NOT NULL REFERENCES curve_results (id),
    decision    TEXT NOT NULL CHECK (decision IN ('accepted', 'rejected')),
    reason      TEXT NOT NULL,
    actor       TEXT NOT NULL,
    at          TEXT NOT NULL
);
CREATE INDEX curve_reviews_curve ON curve_reviews (curve_id, at, id);
CREATE TRIGGER curve_reviews_no_update BEFORE UPDATE ON curve_reviews
BEGIN SELECT RAISE(ABORT, 'review events are immutable'); END;
CREATE TRIGGER curve_reviews_no_delete BEFORE DELETE ON curve_reviews
BEGIN SELECT RAISE(ABORT, 'review events are immutable'); END;

CREATE TABLE curve_refits (
    curve_id    TEXT PRIMARY KEY REFERENCES curve_results (id),
    refit_of    TEXT NOT NULL REFERENCES curve_results (id),
    exclusions  TEXT NOT NULL,
    reason      TEXT NOT NULL
);
CREATE TRIGGER curve_refits_no_update BEFORE UPDATE ON curve_refits
BEGIN SELECT RAISE(ABORT, 'refit records are immutable'); END;
CREATE TRIGGER curve_refits_no_delete BEFORE DELETE ON curve_refits
BEGIN SELECT RAISE(ABORT, 'refit records are immutable'); END;
CREATE INDEX curve_results_refit_of ON curve_results (refit_of) WHERE refit_of IS NOT NULL;

CREATE TABLE msr_studies (
    id          TEXT PRIMARY KEY,
    assay_id    TEXT NOT NULL REFERENCES assays (id),
    created_at  TEXT NOT NULL,
    created_by  TEXT NOT NULL,
    request     TEXT NOT NULL,
    result      TEXT NOT NULL
);
CREATE TRIGGER msr_studies_no_update BEFORE UPDATE ON msr_studies
BEGIN SELECT RAISE(ABORT, 'MSR studies are immutable'); END;
CREATE TRIGGER msr_studies_no_delete BEFORE DELETE ON msr_studies
BEGIN SELECT RAISE(ABORT, 'MSR studies are immutable'); END;

CREATE INDEX plates_measured ON plates (COALESCE(measured_at, created_at), id);

-- +goose Down
DROP INDEX plates_measured;
DROP TRIGGER msr_studies_no_delete;
DROP TRIGGER msr_studies_no_update;
DROP TABLE msr_studies;
DROP INDEX curve_results_refit_of;
DROP TRIGGER curve_refits_no_delete;
DROP TRIGGER curve_refits_no_update;
DROP TABLE curve_refits;
DROP TRIGGER curve_reviews_no_delete;
DROP TRIGGER curve_reviews_no_update;
DROP TABLE curve_reviews;
