package db_test

import (
	"context"
	"errors"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// Re-seeding a revoked token's name (SLUICE_ADMIN_TOKEN at start) does not
// bring it back: UpsertToken answers ErrExists and changes nothing, on both
// engines; an unrevoked one is replaced.
func TestUpsertKeepsRevoked(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		upsert := func(hash string) error {
			return s.Write(ctx, func(w db.Writer) error {
				return w.UpsertToken(ctx, &db.Token{ID: "env-admin", Name: "env-admin", Scope: "admin", Hash: hash, CreatedAt: time.Now()})
			})
		}
		if err := upsert("h1"); err != nil {
			t.Fatal(err)
		}
		if err := upsert("h2"); err != nil {
			t.Fatal(err)
		}
		if _, err := s.TokenByHash(ctx, "h2"); err != nil {
			t.Fatalf("replaced token: %v", err)
		}
		if err := s.Write(ctx, func(w db.Writer) error { return w.RevokeToken(ctx, "env-admin", time.Now()) }); err != nil {
			t.Fatal(err)
		}
		for _, h := range []string{"h2", "h3"} {
			if err := upsert(h); !errors.Is(err, db.ErrExists) {
				t.Errorf("re-seed %s of a revoked token: %v, want ErrExists", h, err)
			}
			if _, err := s.TokenByHash(ctx, h); !errors.Is(err, db.ErrNotFound) {
				t.Errorf("revoked token %s works again: %v", h, err)
			}
		}
	})
}
