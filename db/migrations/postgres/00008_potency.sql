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
    at          TIMESTAMPTZ NOT NULL
);
-- The latest event of a curve is its state.
CREATE INDEX curve_reviews_curve ON curve_reviews (curve_id, at, id);
CREATE TRIGGER curve_reviews_immutable BEFORE UPDATE OR DELETE ON curve_reviews
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();

-- A refit (a curve result with refit_of) stores here which points it left
-- out and why.
CREATE TABLE curve_refits (
    curve_id    TEXT PRIMARY KEY REFERENCES curve_results (id),
    refit_of    TEXT NOT NULL REFERENCES curve_results (id),
    exclusions  JSONB NOT NULL,
    reason      TEXT NOT NULL
);
CREATE TRIGGER curve_refits_immutable BEFORE UPDATE OR DELETE ON curve_refits
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();
-- "Is there a later version of this curve?" for every curve of a history.
CREATE INDEX curve_results_refit_of ON curve_results (refit_of) WHERE refit_of IS NOT NULL;

CREATE TABLE msr_studies (
    id          TEXT PRIMARY KEY,
    assay_id    TEXT NOT NULL REFERENCES assays (id),
    created_at  TIMESTAMPTZ NOT NULL,
    created_by  TEXT NOT NULL,
    request     JSONB NOT NULL,
    result      JSON NOT NULL
);
CREATE TRIGGER msr_studies_immutable BEFORE UPDATE OR DELETE ON msr_studies
    FOR EACH ROW EXECUTE FUNCTION sluice_immutable();

-- GET /v1/plates lists plates newest experiment first, with or without an
-- assay (plates_assay_measured serves the assay's list).
CREATE INDEX plates_measured ON plates ((COALESCE(measured_at, created_at)), id);

-- +goose Down
DROP INDEX plates_measured;
DROP TABLE msr_studies;
DROP INDEX curve_results_refit_of;
DROP TABLE curve_refits;
DROP TABLE curve_reviews;
