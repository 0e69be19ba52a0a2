-- +goose Up
-- A drift chart's running state after its latest point (fit/drift.State
-- as JSON, with the baseline numbers it was judged against), so that a
-- plate arriving in time order is judged from it alone. NULL when the
-- chart must be re-evaluated from its start: no plate yet, a baseline
-- change, or a concurrent write that left it behind.
ALTER TABLE drift_charts ADD COLUMN state TEXT;

-- +goose Down
ALTER TABLE drift_charts DROP COLUMN state;
