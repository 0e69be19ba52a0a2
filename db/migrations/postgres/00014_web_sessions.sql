-- +goose Up
-- Dashboard sessions. The cookie holds a random secret; only its SHA-256
-- is stored (hash), so a copy of the database opens no session. A session
-- belongs to the API token it was opened with and ends with it: reads
-- join api_tokens and skip revoked ones. token_id is NULL only for a
-- session opened while authentication is off (a loopback development
-- server); such sessions are honoured only while it stays off.
CREATE TABLE web_sessions (
    hash       TEXT PRIMARY KEY,
    token_id   TEXT REFERENCES api_tokens (id),
    csrf       TEXT NOT NULL,
    created_at TIMESTAMPTZ NOT NULL,
    last_seen  TIMESTAMPTZ NOT NULL,
    expires_at TIMESTAMPTZ NOT NULL
);
CREATE INDEX web_sessions_expires ON web_sessions (expires_at);

-- +goose Down
DROP TABLE web_sessions;
