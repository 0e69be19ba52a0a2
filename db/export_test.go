package db

import (
	"context"
	"errors"

	"github.com/jackc/pgx/v5/pgxpool"
)

// GroupForTest is a group committer on pool with n committers, for the
// tests of group commit.
type GroupForTest struct{ g *groupCommitter }

func NewGroupForTest(pool *pgxpool.Pool, n int) *GroupForTest {
	return &GroupForTest{g: newGroupCommitter(pool, (&pgEngine{}).classify, n)}
}

// Commit runs fn, whose calls must all be held back, on a PostgreSQL
// writer and commits what it held in the next group, as Write does.
func (t *GroupForTest) Commit(ctx context.Context, fn func(Writer) error) error {
	tx := &pgTx{}
	if err := fn(&sqlWriter{q: tx, e: &pgEngine{}}); err != nil {
		return err
	}
	if tx.tx != nil || len(tx.held) == 0 {
		return errors.New("not a write of held-back calls only")
	}
	return t.g.commit(ctx, tx.held)
}

// Waiting is how many writes wait for a committer.
func (t *GroupForTest) Waiting() int { return len(t.g.queue) }

func (t *GroupForTest) Stop() { t.g.stop() }
