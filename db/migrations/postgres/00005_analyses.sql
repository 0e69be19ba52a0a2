-- +goose Up
-- Single analyses (a fit, a Schild analysis, a potential prediction) over
-- the synchronous work budget: the request waits here for its job
-- (sluice_analysis, whose ID is the row's), then holds the reply the job
-- produced. A row is finished once: queued → done or failed.
CREATE TABLE analyses (
    id            TEXT PRIMARY KEY,
    kind          TEXT NOT NULL,
    created_at    TIMESTAMPTZ NOT NULL,
    submitted_by  TEXT NOT NULL,
    job_id        BIGINT NOT NULL,
    request       JSONB NOT NULL,
    status        TEXT NOT NULL DEFAULT 'queued' CHECK (status IN ('queued', 'done', 'failed')),
    reply_status  INTEGER NOT NULL DEFAULT 0,
    reply_type    TEXT NOT NULL DEFAULT '',
    reply         BYTEA,
    location      TEXT NOT NULL DEFAULT '',
    error         TEXT NOT NULL DEFAULT '',
    finished_at   TIMESTAMPTZ
);
CREATE INDEX analyses_job ON analyses (job_id);

-- +goose Down
DROP TABLE analyses;
