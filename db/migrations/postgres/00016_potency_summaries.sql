-- +goose Up
-- An assay's compound table reads one stored summary per (assay, compound)
-- instead of every curve: potency_summaries holds the summary of the
-- compound's history at the default MSR window (the document the API
-- shows, and the keys the table sorts by in columns). It is derived data,
-- recomputed by the service from the curves; potency_stale lists the
-- (assay, compound) pairs whose curves, reviews or plate QC verdict
-- changed since, filled by the triggers below in the writing transaction
-- itself, and emptied by the transaction that recomputes them.
CREATE TABLE potency_summaries (
    assay_id          TEXT NOT NULL REFERENCES assays (id),
    compound_id       TEXT NOT NULL,
    runs              INTEGER NOT NULL,
    last_measured_at  TIMESTAMPTZ NOT NULL,
    n                 INTEGER NOT NULL,
    mean_log_ec50     DOUBLE PRECISION,
    pec50_mean        DOUBLE PRECISION,
    msr               DOUBLE PRECISION,
    msr_overall       DOUBLE PRECISION,
    summary           JSON NOT NULL,
    PRIMARY KEY (assay_id, compound_id)
);
-- One index per sort key of the table (db.PotencySort), walked either way.
CREATE INDEX potency_summaries_runs ON potency_summaries (assay_id, runs, compound_id);
CREATE INDEX potency_summaries_n ON potency_summaries (assay_id, n, compound_id);
CREATE INDEX potency_summaries_mean ON potency_summaries (assay_id, mean_log_ec50, compound_id);
CREATE INDEX potency_summaries_pec50 ON potency_summaries (assay_id, pec50_mean, compound_id);
CREATE INDEX potency_summaries_msr ON potency_summaries (assay_id, msr, compound_id);
CREATE INDEX potency_summaries_msr_overall ON potency_summaries (assay_id, msr_overall, compound_id);

-- Append-only (no conflict, so concurrent writers never wait on each
-- other here); duplicates are fine.
CREATE TABLE potency_stale (
    assay_id     TEXT NOT NULL,
    compound_id  TEXT NOT NULL
);
CREATE INDEX potency_stale_assay ON potency_stale (assay_id);

-- +goose StatementBegin
CREATE FUNCTION sluice_potency_stale_curve() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    IF NEW.assay_id IS NOT NULL AND NEW.compound_id IS NOT NULL THEN
        INSERT INTO potency_stale (assay_id, compound_id) VALUES (NEW.assay_id, NEW.compound_id);
    END IF;
    RETURN NULL;
END $$;
-- +goose StatementEnd
CREATE TRIGGER curve_results_potency_stale AFTER INSERT ON curve_results
    FOR EACH ROW EXECUTE FUNCTION sluice_potency_stale_curve();

-- +goose StatementBegin
CREATE FUNCTION sluice_potency_stale_review() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    INSERT INTO potency_stale (assay_id, compound_id)
        SELECT assay_id, compound_id FROM curve_results
        WHERE id = NEW.curve_id AND assay_id IS NOT NULL AND compound_id IS NOT NULL;
    RETURN NULL;
END $$;
-- +goose StatementEnd
CREATE TRIGGER curve_reviews_potency_stale AFTER INSERT ON curve_reviews
    FOR EACH ROW EXECUTE FUNCTION sluice_potency_stale_review();

-- +goose StatementBegin
CREATE FUNCTION sluice_potency_stale_plate() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
    INSERT INTO potency_stale (assay_id, compound_id)
        SELECT DISTINCT assay_id, compound_id FROM curve_results
        WHERE plate_id = NEW.id AND assay_id IS NOT NULL AND compound_id IS NOT NULL;
    RETURN NULL;
END $$;
-- +goose StatementEnd
CREATE TRIGGER plates_potency_stale AFTER UPDATE OF qc_pass ON plates
    FOR EACH ROW WHEN (OLD.qc_pass IS DISTINCT FROM NEW.qc_pass)
    EXECUTE FUNCTION sluice_potency_stale_plate();

-- Every pair with curves is stale until first summarised.
INSERT INTO potency_stale (assay_id, compound_id)
    SELECT DISTINCT assay_id, compound_id FROM curve_results
    WHERE assay_id IS NOT NULL AND compound_id IS NOT NULL;

-- +goose Down
DROP TRIGGER plates_potency_stale ON plates;
DROP FUNCTION sluice_potency_stale_plate();
DROP TRIGGER curve_reviews_potency_stale ON curve_reviews;
DROP FUNCTION sluice_potency_stale_review();
DROP TRIGGER curve_results_potency_stale ON curve_results;
DROP FUNCTION sluice_potency_stale_curve();
DROP TABLE potency_stale;
DROP TABLE potency_summaries;
