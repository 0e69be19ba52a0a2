-- +goose Up
-- Single analyses over the synchronous work budget: the request waits here
-- for its job, then holds the reply the job produced (see the PostgreSQL
-- migration).
CREATE TABLE analyses (
    id            TEXT PRIMARY KEY,
    kind          TEXT NOT NULL,
    created_at    TEXT NOT NULL,
    submitted_by  TEXT NOT NULL,
    job_id        INTEGER NOT NULL,
    request       TEXT NOT NULL,
    status        TEXT NOT NULL DEFAULT 'queued' CHECK (status IN ('queued', 'done', 'failed')),
    reply_status  INTEGER NOT NULL DEFAULT 0,
    reply_type    TEXT NOT NULL DEFAULT '',
    reply         BLOB,
    location      TEXT NOT NULL DEFAULT '',
    error         TEXT NOT NULL DEFAULT '',
    finished_at   TEXT
);
CREATE INDEX analyses_job ON analyses (job_id);

-- +goose Down
DROP TABLE analyses;
