package db_test

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgxpool"

	"sluice/db"
	"sluice/db/dbtest"
)

// groupBench is a PostgreSQL schema with a group committer of one
// committer, a pool to look with, and a transaction that holds the
// idempotency key "k" uncommitted, so that the first write to insert it
// waits in PostgreSQL while the test queues others behind it.
type groupBench struct {
	g       *db.GroupForTest
	pool    *pgxpool.Pool
	blocker pgx.Tx
}

var keyK = db.Idempotent{Actor: "a", Key: "k", RequestSHA256: "h", Status: 201, ContentType: "application/json", Body: []byte("{}"), CreatedAt: t0}

func newGroupBench(t *testing.T) *groupBench {
	t.Helper()
	ctx := context.Background()
	url := dbtest.PostgresURL(t)
	s, err := db.Open(ctx, url, "") // migrates the schema
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
	pool, err := pgxpool.New(ctx, url)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(pool.Close)
	b := &groupBench{g: db.NewGroupForTest(pool, 1), pool: pool}
	t.Cleanup(b.g.Stop)
	if b.blocker, err = pool.Begin(ctx); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { b.blocker.Rollback(ctx) }) // before Stop, which waits for the group in flight
	if _, err := b.blocker.Exec(ctx, "INSERT INTO idempotency_keys (actor, key, request_sha256, status, content_type, body, location, omitted_bytes, created_at) "+
		"VALUES ('a', 'k', 'h', 201, 'application/json', '', '', 0, now())"); err != nil {
		t.Fatal(err)
	}
	return b
}

// commitBlocked starts a write of key k, which waits for the blocker,
// and returns once PostgreSQL shows it waiting; its outcome arrives on
// the channel.
func (b *groupBench) commitBlocked(t *testing.T) <-chan error {
	t.Helper()
	out := make(chan error, 1)
	go func() {
		out <- b.g.Commit(context.Background(), func(w db.Writer) error {
			rec := keyK
			return w.InsertIdempotent(context.Background(), &rec)
		})
	}()
	b.await(t, "a write waiting for the key's lock", func() bool {
		var n int
		err := b.pool.QueryRow(context.Background(),
			"SELECT count(*) FROM pg_stat_activity WHERE datname = current_database() AND wait_event_type = 'Lock' AND query LIKE 'INSERT INTO idempotency_keys%'").Scan(&n)
		return err == nil && n > 0
	})
	return out
}

// await polls cond for up to 20 s.
func (b *groupBench) await(t *testing.T, what string, cond func() bool) {
	t.Helper()
	for end := time.Now().Add(20 * time.Second); !cond(); time.Sleep(5 * time.Millisecond) {
		if time.Now().After(end) {
			t.Fatalf("no %s after 20 s", what)
		}
	}
}

// commitAudits commits n writes of one audit entry each (targets
// prefix-0 …), the one numbered withKey also inserting key k, and
// returns once all n wait for the committer.
func (b *groupBench) commitAudits(t *testing.T, prefix string, n, withKey int) []chan error {
	t.Helper()
	outs := make([]chan error, n)
	for i := range n {
		outs[i] = make(chan error, 1)
		go func() {
			outs[i] <- b.g.Commit(context.Background(), func(w db.Writer) error {
				ctx := context.Background()
				if err := w.InsertAudit(ctx, &db.AuditEntry{At: t0, Actor: "a", Action: "group", Target: fmt.Sprintf("%s-%d", prefix, i)}); err != nil {
					return err
				}
				if i == withKey {
					rec := keyK
					return w.InsertIdempotent(ctx, &rec)
				}
				return nil
			})
		}()
	}
	b.await(t, fmt.Sprintf("%d writes waiting", n), func() bool { return b.g.Waiting() == n })
	return outs
}

// audits counts the audit entries of the group writes and the
// transactions that wrote them (rows written in one transaction share
// its xmin).
func (b *groupBench) audits(t *testing.T) (rows, xacts int) {
	t.Helper()
	if err := b.pool.QueryRow(context.Background(),
		"SELECT count(*), count(DISTINCT xmin::text) FROM audit_log WHERE action = 'group'").Scan(&rows, &xacts); err != nil {
		t.Fatal(err)
	}
	return rows, xacts
}

// Writes that wait while a group is in flight are committed together, in
// one transaction, and each is answered only after it committed.
func TestGroupCommitGroupsWaitingWrites(t *testing.T) {
	b := newGroupBench(t)
	first := b.commitBlocked(t)
	outs := b.commitAudits(t, "w", 19, -1)
	if err := b.blocker.Rollback(context.Background()); err != nil {
		t.Fatal(err)
	}
	if err := <-first; err != nil {
		t.Errorf("the first write: %v", err)
	}
	for i, out := range outs {
		if err := <-out; err != nil {
			t.Errorf("write %d: %v", i, err)
		}
	}
	if rows, xacts := b.audits(t); rows != 19 || xacts != 1 {
		t.Errorf("19 waiting writes stored %d audit entries in %d transactions, want 19 in 1", rows, xacts)
	}
}

// When one write of a group fails, the group is rolled back and each
// write is committed on its own: the others are stored, and the failing
// one gets its own error and keeps nothing.
func TestGroupCommitFailureIsolated(t *testing.T) {
	b := newGroupBench(t)
	first := b.commitBlocked(t)
	outs := b.commitAudits(t, "w", 6, 3)
	if err := b.blocker.Commit(context.Background()); err != nil { // key k is now taken
		t.Fatal(err)
	}
	if err := <-first; !errors.Is(err, db.ErrExists) {
		t.Errorf("the first write, of a taken key: %v, want ErrExists", err)
	}
	for i, out := range outs {
		err := <-out
		switch {
		case i == 3 && (!errors.Is(err, db.ErrExists) || !strings.Contains(err.Error(), `InsertIdempotent("k")`)):
			t.Errorf("write 3, of a taken key: %v, want InsertIdempotent's ErrExists", err)
		case i != 3 && err != nil:
			t.Errorf("write %d: %v", i, err)
		}
	}
	if rows, xacts := b.audits(t); rows != 5 || xacts != 5 {
		t.Errorf("5 good writes of a failed group stored %d audit entries in %d transactions, want 5 in 5", rows, xacts)
	}
	var n int
	if err := b.pool.QueryRow(context.Background(), "SELECT count(*) FROM audit_log WHERE target = 'w-3'").Scan(&n); err != nil || n != 0 {
		t.Errorf("the failed write's audit entry: %d rows (%v), want none", n, err)
	}
}

// Stopping the committers commits the group in flight; writes still
// waiting fail with ErrUnavailable and store nothing.
func TestGroupCommitStop(t *testing.T) {
	b := newGroupBench(t)
	first := b.commitBlocked(t)
	outs := b.commitAudits(t, "w", 3, -1)
	stopped := make(chan struct{})
	go func() {
		b.g.Stop()
		close(stopped)
	}()
	time.Sleep(50 * time.Millisecond) // Stop waits for the group in flight
	if err := b.blocker.Rollback(context.Background()); err != nil {
		t.Fatal(err)
	}
	<-stopped
	if err := <-first; err != nil {
		t.Errorf("the write in flight: %v", err)
	}
	for i, out := range outs {
		if err := <-out; !errors.Is(err, db.ErrUnavailable) {
			t.Errorf("waiting write %d after stop: %v, want ErrUnavailable", i, err)
		}
	}
	if rows, _ := b.audits(t); rows != 0 {
		t.Errorf("writes that never ran stored %d audit entries", rows)
	}
}

// A write whose deadline is near does not cut its group short: the group
// runs to the latest deadline among its writes, and the write with little
// time left stops waiting on its own.
func TestGroupCommitLatestDeadline(t *testing.T) {
	b := newGroupBench(t)
	ctx := context.Background()
	first := b.commitBlocked(t)
	// A second transaction holds key k2, which the long write's group
	// will wait for.
	blocker2, err := b.pool.Begin(ctx)
	if err != nil {
		t.Fatal(err)
	}
	defer blocker2.Rollback(ctx)
	if _, err := blocker2.Exec(ctx, "INSERT INTO idempotency_keys (actor, key, request_sha256, status, content_type, body, location, omitted_bytes, created_at) "+
		"VALUES ('a', 'k2', 'h', 201, 'application/json', '', '', 0, now())"); err != nil {
		t.Fatal(err)
	}
	short, cancel := context.WithTimeout(ctx, 2*time.Second)
	defer cancel()
	shortDone, longDone := make(chan error, 1), make(chan error, 1)
	go func() {
		shortDone <- b.g.Commit(short, func(w db.Writer) error {
			return w.InsertAudit(ctx, &db.AuditEntry{At: t0, Actor: "a", Action: "group", Target: "short"})
		})
	}()
	go func() {
		longDone <- b.g.Commit(ctx, func(w db.Writer) error {
			rec := keyK
			rec.Key = "k2"
			return w.InsertIdempotent(ctx, &rec)
		})
	}()
	b.await(t, "2 writes waiting", func() bool { return b.g.Waiting() == 2 })
	if err := b.blocker.Rollback(ctx); err != nil { // the first group commits; the second waits for k2
		t.Fatal(err)
	}
	if err := <-first; err != nil {
		t.Fatalf("the first write: %v", err)
	}
	if err := <-shortDone; !errors.Is(err, context.DeadlineExceeded) {
		t.Errorf("the write whose deadline passed while its group waited: %v, want its deadline", err)
	}
	if err := blocker2.Rollback(ctx); err != nil {
		t.Fatal(err)
	}
	if err := <-longDone; err != nil {
		t.Errorf("the write with time left, in the same group: %v", err)
	}
}
