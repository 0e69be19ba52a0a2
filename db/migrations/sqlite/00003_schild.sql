-- +goose Up
CREATE TABLE schild_runs (
    id             TEXT PRIMARY KEY,
    created_at     TEXT NOT NULL,
    submitted_by   TEXT NOT NULL,
    plate_id       TEXT REFERENCES plates (id),
    agonist_id     TEXT NOT NULL DEFAULT '',
    antagonist_id  TEXT NOT NULL DEFAULT '',
    engine_version TEXT NOT NULL,
    input_sha256   TEXT NOT NULL,
    input          TEXT NOT NULL,
    result         TEXT NOT NULL
);
CREATE INDEX schild_runs_pair ON schild_runs (agonist_id, antagonist_id, id);
CREATE INDEX schild_runs_plate ON schild_runs (plate_id);

-- +goose Down
DROP TABLE schild_runs;
