-- +goose Up
-- Idempotency records expire after a retention: Writer.ExpireIdempotent
-- deletes the oldest first, a batch at a time, through this index.
CREATE INDEX idempotency_keys_created ON idempotency_keys (created_at);
-- A reply over the stored-reply cap keeps its key, status and Location but
-- not its body; omitted_bytes is the body's size then (0: the body is kept).
ALTER TABLE idempotency_keys ADD COLUMN omitted_bytes BIGINT NOT NULL DEFAULT 0;
-- The sweep of discarded jobs (Store.DiscardedWaiting) finds a plate by its
-- job.
CREATE INDEX plates_job ON plates (job_id);

-- +goose Down
DROP INDEX plates_job;
ALTER TABLE idempotency_keys DROP COLUMN omitted_bytes;
DROP INDEX idempotency_keys_created;
