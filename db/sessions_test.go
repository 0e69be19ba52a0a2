package db_test

import (
	"context"
	"errors"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// A dashboard session reads back with its token's name and scope, ends
// with the token (revoked → not found), is touched and deleted, and the
// sweep removes expired and idle ones only; a token-less session reads as
// anonymous admin. Both engines.
func TestSessions(t *testing.T) {
	dbtest.Engines(t, func(t *testing.T, s db.Store) {
		ctx := context.Background()
		t0 := time.Date(2026, 11, 2, 9, 0, 0, 0, time.UTC)
		w := func(fn func(w db.Writer) error) {
			t.Helper()
			if err := s.Write(ctx, fn); err != nil {
				t.Fatal(err)
			}
		}
		w(func(w db.Writer) error {
			if err := w.InsertToken(ctx, &db.Token{ID: "t1", Name: "reader", Scope: "read", Hash: "th1", CreatedAt: t0}); err != nil {
				return err
			}
			for _, ss := range []*db.Session{
				{Hash: "s1", TokenID: "t1", CSRF: "c1", CreatedAt: t0, LastSeen: t0, ExpiresAt: t0.Add(12 * time.Hour)},
				{Hash: "s2", TokenID: "t1", CSRF: "c2", CreatedAt: t0, LastSeen: t0, ExpiresAt: t0.Add(time.Hour)},
				{Hash: "s3", CSRF: "c3", CreatedAt: t0, LastSeen: t0.Add(3 * time.Hour), ExpiresAt: t0.Add(12 * time.Hour)},
			} {
				if err := w.InsertSession(ctx, ss); err != nil {
					return err
				}
			}
			return nil
		})
		got, err := s.Session(ctx, "s1")
		if err != nil {
			t.Fatal(err)
		}
		if got.Name != "reader" || got.Scope != "read" || got.CSRF != "c1" || !got.ExpiresAt.Equal(t0.Add(12*time.Hour)) {
			t.Errorf("session s1 = %+v", got)
		}
		if a, err := s.Session(ctx, "s3"); err != nil || a.Name != "anonymous" || a.Scope != "admin" || a.TokenID != "" {
			t.Errorf("token-less session = %+v, %v", a, err)
		}
		w(func(w db.Writer) error { return w.TouchSession(ctx, "s1", t0.Add(2*time.Hour)) })
		if got, _ := s.Session(ctx, "s1"); got == nil || !got.LastSeen.Equal(t0.Add(2*time.Hour)) {
			t.Errorf("touched session = %+v", got)
		}
		// At t0+2h30 with a 1 h idle rule: s2 is past its end, s1 idle
		// since t0+2h is kept (30 min), s3 seen at t0+3h is kept.
		var n int64
		w(func(w db.Writer) error {
			var err error
			n, err = w.DeleteSessionsBefore(ctx, t0.Add(90*time.Minute), t0.Add(150*time.Minute))
			return err
		})
		if n != 1 {
			t.Errorf("swept %d sessions, want 1 (s2)", n)
		}
		if _, err := s.Session(ctx, "s2"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("expired s2 after the sweep: %v", err)
		}
		w(func(w db.Writer) error { return w.RevokeToken(ctx, "reader", t0) })
		if _, err := s.Session(ctx, "s1"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("session of a revoked token: %v, want ErrNotFound", err)
		}
		w(func(w db.Writer) error { return w.DeleteSession(ctx, "s3") })
		if _, err := s.Session(ctx, "s3"); !errors.Is(err, db.ErrNotFound) {
			t.Errorf("deleted s3: %v", err)
		}
	})
}
