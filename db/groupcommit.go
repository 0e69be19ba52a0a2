package db

import (
	"context"
	"errors"
	"sync"
	"time"

	"github.com/jackc/pgx/v5"
	"github.com/jackc/pgx/v5/pgxpool"
)

// Group commit on PostgreSQL. A write that reaches COMMIT having sent
// nothing (every statement held back: a stored fit with its audit entry
// and idempotency record) needs no connection of its own: it is handed to
// a committer, which takes every such write waiting at that moment (up to
// maxGroup) and commits them in one transaction, in one round trip:
//
//	BEGIN; write 1's statements; write 2's statements; …; COMMIT
//
// Each write is answered only once that COMMIT has succeeded, so no
// write is acknowledged before it is durable (synchronous_commit is left
// as it is). Under load, writes queue while a group is in flight, so a
// group grows with the load and costs one transaction, one WAL flush and
// one round trip; alone, a write waits for no one.
//
// A group is all or nothing, but its writes are not: when PostgreSQL
// refuses one of a group's statements (one write's key is taken, one is
// invalid), the group is rolled back and each of its writes is committed
// again on its own, so each gets its own outcome and error (send says
// when that is safe). Writes in a group are independent by construction:
// none read anything, so running them in one transaction changes no
// result.

// maxGroup bounds the writes one transaction commits.
const maxGroup = 64

// groupCommitters is how many groups may be in flight at once, each on a
// connection of the pool.
const groupCommitters = 2

// groupCommitter commits held-back writes in groups; see above.
type groupCommitter struct {
	pool     *pgxpool.Pool
	classify func(error) error
	queue    chan *groupWrite
	quit     chan struct{} // closed by stop: committers take no new group
	stopped  chan struct{} // closed when every committer has returned
	stopOnce sync.Once
	wg       sync.WaitGroup
}

// groupWrite is one write waiting to be committed.
type groupWrite struct {
	ctx  context.Context // the Write's, bounded by its call deadline
	held []heldStmt
	done chan error // its outcome, sent once
}

// newGroupCommitter starts n committers on pool; stop ends them.
func newGroupCommitter(pool *pgxpool.Pool, classify func(error) error, n int) *groupCommitter {
	g := &groupCommitter{pool: pool, classify: classify, queue: make(chan *groupWrite, 4*maxGroup),
		quit: make(chan struct{}), stopped: make(chan struct{})}
	for range n {
		g.wg.Add(1)
		go g.run()
	}
	go func() {
		g.wg.Wait()
		close(g.stopped)
	}()
	return g
}

// stop ends the committers once their groups in flight are committed;
// writes still waiting fail with ErrUnavailable.
func (g *groupCommitter) stop() {
	g.stopOnce.Do(func() { close(g.quit) })
	<-g.stopped
}

// commit commits held (a write's statements) in the next group and
// returns the write's outcome.
func (g *groupCommitter) commit(ctx context.Context, held []heldStmt) error {
	w := &groupWrite{ctx: ctx, held: held, done: make(chan error, 1)}
	select {
	case g.queue <- w:
	case <-ctx.Done():
		return timedOut(ctx, ctx.Err())
	case <-g.quit:
		return &Error{Op: "Write", Err: ErrUnavailable}
	}
	select {
	case err := <-w.done:
		return err
	case <-ctx.Done():
		// The write's own deadline passed (or its caller left) while its
		// group was in flight: as for a single write cut off at COMMIT,
		// it may or may not have been committed.
		return timedOut(ctx, ctx.Err())
	case <-g.stopped:
		select {
		case err := <-w.done:
			return err
		default:
			return &Error{Op: "Write", Err: ErrUnavailable}
		}
	}
}

// run takes a write, then every write waiting behind it, and commits them.
func (g *groupCommitter) run() {
	defer g.wg.Done()
	for {
		select {
		case <-g.quit:
			return
		default:
		}
		var group []*groupWrite
		select {
		case w := <-g.queue:
			group = append(group, w)
		case <-g.quit:
			return
		}
	more:
		for len(group) < maxGroup {
			select {
			case w := <-g.queue:
				group = append(group, w)
			default:
				break more
			}
		}
		g.commitGroup(group)
	}
}

// commitGroup commits the group's live writes together, or, when that
// fails, each on its own, and answers each.
func (g *groupCommitter) commitGroup(group []*groupWrite) {
	live := group[:0]
	for _, w := range group {
		if err := w.ctx.Err(); err != nil {
			w.done <- timedOut(w.ctx, err)
			continue
		}
		live = append(live, w)
	}
	if len(live) == 0 {
		return
	}
	retry, err := g.send(live)
	if err == nil || len(live) == 1 || !retry {
		for _, w := range live {
			w.done <- err
		}
		return
	}
	for _, w := range live {
		_, err := g.send([]*groupWrite{w})
		w.done <- err
	}
}

// send commits ws in one transaction, within the latest of their
// deadlines (a write whose own deadline passes first stops waiting; see
// commit), so that one write queued late does not cut the others short.
// On failure, retry says whether trying each write again on its own is
// safe: only when nothing of the group was committed, that is, when
// PostgreSQL refused a statement and the transaction is still open and
// aborted, when COMMIT answered ROLLBACK, or when pgx could not encode the
// batch and sent nothing. After a lost connection or a passed deadline
// COMMIT may have been applied, and trying again could store a write
// twice, so every write of the group gets the error, as a single write
// would.
func (g *groupCommitter) send(ws []*groupWrite) (retry bool, err error) {
	var at time.Time
	var held []heldStmt
	for _, w := range ws {
		d, ok := w.ctx.Deadline()
		if !ok {
			d = deadline(DefaultCallTimeout)
		}
		if d.After(at) {
			at = d
		}
		held = append(held, w.held...)
	}
	ctx, cancel := within(context.Background(), at)
	defer cancel()
	conn, err := g.pool.Acquire(ctx)
	if err != nil {
		return false, timedOut(ctx, err)
	}
	defer conn.Release()
	tx, tags, err := pipeline(ctx, conn.Conn(), nil, held, []stmt{commitStmt}, g.classify)
	if err = committed(tags, err); err != nil {
		c := conn.Conn()
		var unsent pgx.ErrPreprocessingBatch
		retry = (!c.IsClosed() && c.PgConn().TxStatus() == 'E') || errors.Is(err, pgx.ErrTxCommitRollback) || errors.As(err, &unsent)
		rollback(ctx, c, tx)
	}
	return retry, err
}
