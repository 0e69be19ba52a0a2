-- +goose Up
-- GET /v1/fits lists single fits newest first; plate curves outnumber them
-- (one per compound per plate) and share the ID order, so the listing
-- needs an index of its own rather than a walk of the primary key.
CREATE INDEX curve_results_fits ON curve_results (id) WHERE kind = 'fit';

-- +goose Down
DROP INDEX curve_results_fits;
