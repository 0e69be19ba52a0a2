package db

import (
	"context"
	"time"
)

const tokenCols = "id, name, scope, hash, created_at, revoked_at"

func (w *sqlWriter) InsertToken(ctx context.Context, t *Token) error {
	return w.insert(ctx, "InsertToken", t.Name, "INSERT INTO api_tokens (id, name, scope, hash, created_at) VALUES ($1, $2, $3, $4, $5)",
		t.ID, t.Name, t.Scope, t.Hash, w.e.timeArg(t.CreatedAt))
}

func (w *sqlWriter) UpsertToken(ctx context.Context, t *Token) error {
	// A revoked token stays revoked: re-seeding its secret must not bring
	// it back (the WHERE of the update leaves its row alone).
	n, err := w.exec(ctx, "UpsertToken", t.Name, "INSERT INTO api_tokens (id, name, scope, hash, created_at) VALUES ($1, $2, $3, $4, $5) "+
		"ON CONFLICT (name) DO UPDATE SET hash = excluded.hash, scope = excluded.scope WHERE api_tokens.revoked_at IS NULL",
		t.ID, t.Name, t.Scope, t.Hash, w.e.timeArg(t.CreatedAt))
	if err != nil {
		return err
	}
	if n == 0 {
		return &Error{Op: "UpsertToken", Key: t.Name, Err: ErrExists}
	}
	return nil
}

// RevokeToken revokes the unrevoked token whose name or ID is nameOrID, as
// of at; ErrNotFound when there is none.
func (w *sqlWriter) RevokeToken(ctx context.Context, nameOrID string, at time.Time) error {
	n, err := w.exec(ctx, "RevokeToken", nameOrID,
		"UPDATE api_tokens SET revoked_at = $2 WHERE (name = $1 OR id = $1) AND revoked_at IS NULL", nameOrID, w.e.timeArg(at))
	if err != nil {
		return err
	}
	if n == 0 {
		return &Error{Op: "RevokeToken", Key: nameOrID, Err: ErrNotFound}
	}
	return nil
}

func (s *sqlStore) TokenByHash(ctx context.Context, hash string) (*Token, error) {
	t, err := scanToken(s.e.queryRow(ctx, "SELECT "+tokenCols+" FROM api_tokens WHERE hash = $1 AND revoked_at IS NULL", hash))
	if err != nil {
		// The key is a secret's hash: not part of the error's text.
		return nil, s.read("TokenByHash", "", err)
	}
	return t, nil
}

// Tokens lists every token, revoked ones too, by name, without hashes.
func (s *sqlStore) Tokens(ctx context.Context) ([]Token, error) {
	rows, err := s.e.query(ctx, "SELECT "+tokenCols+" FROM api_tokens ORDER BY name")
	if err != nil {
		return nil, s.read("Tokens", "", err)
	}
	defer rows.Close()
	var out []Token
	for rows.Next() {
		t, err := scanToken(rows)
		if err != nil {
			return nil, s.read("Tokens", "", err)
		}
		t.Hash = ""
		out = append(out, *t)
	}
	return out, s.read("Tokens", "", rows.Err())
}

func scanToken(row rowScanner) (*Token, error) {
	var t Token
	var c dbTime
	var revoked *dbTime
	if err := row.Scan(&t.ID, &t.Name, &t.Scope, &t.Hash, &c, &revoked); err != nil {
		return nil, err
	}
	t.CreatedAt = c.t
	if revoked != nil && !revoked.t.IsZero() {
		r := revoked.t
		t.RevokedAt = &r
	}
	return &t, nil
}
