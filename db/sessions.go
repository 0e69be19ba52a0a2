package db

import (
	"context"
	"time"
)

// Session is a dashboard sign-in. Hash is the hex SHA-256 of the secret in
// the visitor's cookie (the secret itself is never stored); the session
// acts as the API token it was opened with (TokenID, with that token's
// Name and Scope as read) and ends when the token is revoked.
type Session struct {
	Hash string
	// TokenID is "" for a session opened while authentication was off.
	TokenID string
	// Name and Scope are the token's, filled in by Session ("anonymous",
	// admin, without a token).
	Name, Scope string
	// CSRF is the value every form of this session must echo.
	CSRF      string
	CreatedAt time.Time
	LastSeen  time.Time
	// ExpiresAt is the absolute end; an idle end is the reader's rule
	// (LastSeen + its idle timeout).
	ExpiresAt time.Time
}

// Sessions reads dashboard sessions.
type Sessions interface {
	// Session returns the session with that hash whose token is not
	// revoked; ErrNotFound otherwise (expiry is the caller's to judge).
	Session(ctx context.Context, hash string) (*Session, error)
}

func (w *sqlWriter) InsertSession(ctx context.Context, s *Session) error {
	var token any
	if s.TokenID != "" {
		token = s.TokenID
	}
	return w.insert(ctx, "InsertSession", "", "INSERT INTO web_sessions (hash, token_id, csrf, created_at, last_seen, expires_at) "+
		"VALUES ($1, $2, $3, $4, $5, $6)", s.Hash, token, s.CSRF, w.e.timeArg(s.CreatedAt), w.e.timeArg(s.LastSeen),
		w.e.timeArg(s.ExpiresAt))
}

func (w *sqlWriter) TouchSession(ctx context.Context, hash string, at time.Time) error {
	_, err := w.exec(ctx, "TouchSession", "", "UPDATE web_sessions SET last_seen = $2 WHERE hash = $1", hash, w.e.timeArg(at))
	return err
}

func (w *sqlWriter) DeleteSession(ctx context.Context, hash string) error {
	_, err := w.exec(ctx, "DeleteSession", "", "DELETE FROM web_sessions WHERE hash = $1", hash)
	return err
}

func (w *sqlWriter) DeleteSessionsBefore(ctx context.Context, idleSince, now time.Time) (int64, error) {
	return w.exec(ctx, "DeleteSessionsBefore", "", "DELETE FROM web_sessions WHERE expires_at <= $1 OR last_seen <= $2",
		w.e.timeArg(now), w.e.timeArg(idleSince))
}

func (s *sqlStore) Session(ctx context.Context, hash string) (*Session, error) {
	var out Session
	var c, l, e dbTime
	err := s.e.queryRow(ctx, "SELECT w.hash, COALESCE(w.token_id, ''), COALESCE(t.name, 'anonymous'), COALESCE(t.scope, 'admin'), "+
		"w.csrf, w.created_at, w.last_seen, w.expires_at FROM web_sessions w LEFT JOIN api_tokens t ON t.id = w.token_id "+
		"WHERE w.hash = $1 AND (w.token_id IS NULL OR t.revoked_at IS NULL)", hash).
		Scan(&out.Hash, &out.TokenID, &out.Name, &out.Scope, &out.CSRF, &c, &l, &e)
	if err != nil {
		// The key is a secret's hash: not part of the error's text.
		return nil, s.read("Session", "", err)
	}
	out.CreatedAt, out.LastSeen, out.ExpiresAt = c.t, l.t, e.t
	return &out, nil
}
