-- +goose Up
-- The Location header of a stored reply, so that a replay answers with it
-- too ('' for none, and for replies stored before).
ALTER TABLE idempotency_keys ADD COLUMN location TEXT NOT NULL DEFAULT '';

-- +goose Down
ALTER TABLE idempotency_keys DROP COLUMN location;
