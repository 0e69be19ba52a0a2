package db

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"
)

// sqlStore implements Store on either engine with one set of SQL text.
type sqlStore struct {
	e engine
	q queue
}

func (s *sqlStore) Job(ctx context.Context, id int64) (*Job, error) { return s.q.job(ctx, id) }

func (s *sqlStore) StartWorkers(ctx context.Context, work WorkFunc, workers int) error {
	return s.q.start(ctx, work, workers)
}

func (s *sqlStore) StopWorkers(ctx context.Context) error { return s.q.stop(ctx) }

// sqlWriter implements Writer inside a transaction.
type sqlWriter struct {
	q     querier
	e     engine
	queue queue
}

func (w *sqlWriter) EnqueuePlateFit(ctx context.Context, plateID string) (int64, error) {
	id, err := w.queue.enqueue(ctx, w.q, PlateFitArgs{PlateID: plateID})
	if errors.Is(err, errNeedsTx) {
		return 0, err
	}
	return id, w.e.translate(err)
}

func (s *sqlStore) Write(ctx context.Context, fn func(Writer) error) error {
	err := s.e.inTx(ctx, func(q querier) error { return fn(&sqlWriter{q: q, e: s.e, queue: s.q}) })
	return s.e.translate(err)
}

func (s *sqlStore) Ping(ctx context.Context) error { return s.e.translate(s.e.ping(ctx)) }
func (s *sqlStore) Stats() PoolStats               { return s.e.stats() }
func (s *sqlStore) Engine() string                 { return s.e.name() }
func (s *sqlStore) Close()                         { s.e.close() }

const catalogueCols = "id, name, target, readout, units, created_at, created_by"

func (w *sqlWriter) InsertAssay(ctx context.Context, a *Assay) error {
	return w.e.translate(w.q.exec(ctx, "INSERT INTO assays ("+catalogueCols+") VALUES ($1, $2, $3, $4, $5, $6, $7)",
		a.ID, a.Name, a.Target, a.Readout, a.Units, w.e.timeArg(a.CreatedAt), a.CreatedBy))
}

func (w *sqlWriter) InsertCompound(ctx context.Context, c *Compound) error {
	return w.e.translate(w.q.exec(ctx, "INSERT INTO compounds ("+catalogueCols+") VALUES ($1, $2, $3, $4, $5, $6, $7)",
		c.ID, c.Name, c.Target, c.Readout, c.Units, w.e.timeArg(c.CreatedAt), c.CreatedBy))
}

func (s *sqlStore) Assay(ctx context.Context, id string) (*Assay, error) {
	var a Assay
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT "+catalogueCols+" FROM assays WHERE id = $1", id).
		Scan(&a.ID, &a.Name, &a.Target, &a.Readout, &a.Units, &t, &a.CreatedBy)
	if err != nil {
		return nil, s.e.translate(err)
	}
	a.CreatedAt = t.t
	return &a, nil
}

func (s *sqlStore) Compound(ctx context.Context, id string) (*Compound, error) {
	var c Compound
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT "+catalogueCols+" FROM compounds WHERE id = $1", id).
		Scan(&c.ID, &c.Name, &c.Target, &c.Readout, &c.Units, &t, &c.CreatedBy)
	if err != nil {
		return nil, s.e.translate(err)
	}
	c.CreatedAt = t.t
	return &c, nil
}

func (s *sqlStore) Assays(ctx context.Context) ([]Assay, error) {
	rows, err := s.e.query(ctx, "SELECT "+catalogueCols+" FROM assays ORDER BY id")
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	var out []Assay
	for rows.Next() {
		var a Assay
		var t dbTime
		if err := rows.Scan(&a.ID, &a.Name, &a.Target, &a.Readout, &a.Units, &t, &a.CreatedBy); err != nil {
			return nil, s.e.translate(err)
		}
		a.CreatedAt = t.t
		out = append(out, a)
	}
	return out, s.e.translate(rows.Err())
}

func (s *sqlStore) Compounds(ctx context.Context) ([]Compound, error) {
	rows, err := s.e.query(ctx, "SELECT "+catalogueCols+" FROM compounds ORDER BY id")
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	var out []Compound
	for rows.Next() {
		var c Compound
		var t dbTime
		if err := rows.Scan(&c.ID, &c.Name, &c.Target, &c.Readout, &c.Units, &t, &c.CreatedBy); err != nil {
			return nil, s.e.translate(err)
		}
		c.CreatedAt = t.t
		out = append(out, c)
	}
	return out, s.e.translate(rows.Err())
}

const fitCols = "id, created_at, submitted_by, assay_id, compound_id, refit_of, model, status, log_ec50, " +
	"engine_version, input_sha256, settings, input, result, labels"

func (w *sqlWriter) InsertFitRun(ctx context.Context, r *FitRun) error {
	labels := r.Labels
	if len(labels) == 0 {
		labels = []byte("{}")
	}
	err := w.q.exec(ctx, "INSERT INTO fit_runs ("+fitCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15)",
		r.ID, w.e.timeArg(r.CreatedAt), r.SubmittedBy, nullString(r.AssayID), nullString(r.CompoundID), nullString(r.RefitOf),
		r.Model, r.Status, r.LogEC50, r.EngineVersion, r.InputSHA256,
		string(r.Settings), string(r.Input), string(r.Result), string(labels))
	if err != nil {
		return w.e.translate(err)
	}
	if len(r.Params) == 0 {
		return nil
	}
	// One multi-row INSERT for the parameters.
	var b strings.Builder
	b.WriteString("INSERT INTO fit_params (run_id, ord, name, estimate, se, wald_lo, wald_hi, boot_lo, boot_hi, fixed, at_bound) VALUES ")
	args := make([]any, 0, 11*len(r.Params))
	for i, p := range r.Params {
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteByte('(')
		for k := 1; k <= 11; k++ {
			if k > 1 {
				b.WriteString(", ")
			}
			b.WriteByte('$')
			b.WriteString(strconv.Itoa(11*i + k))
		}
		b.WriteByte(')')
		args = append(args, r.ID, i, p.Name, p.Estimate, p.SE, p.WaldLo, p.WaldHi, p.BootLo, p.BootHi, p.Fixed, p.AtBound)
	}
	return w.e.translate(w.q.exec(ctx, b.String(), args...))
}

func (s *sqlStore) FitRun(ctx context.Context, id string) (*FitRun, error) {
	r, err := scanFitRun(s.e.queryRow(ctx, "SELECT "+fitCols+" FROM fit_runs WHERE id = $1", id))
	if err != nil {
		return nil, s.e.translate(err)
	}
	rows, err := s.e.query(ctx, "SELECT name, estimate, se, wald_lo, wald_hi, boot_lo, boot_hi, fixed, at_bound "+
		"FROM fit_params WHERE run_id = $1 ORDER BY ord", id)
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	for rows.Next() {
		var p FitParam
		if err := rows.Scan(&p.Name, &p.Estimate, &p.SE, &p.WaldLo, &p.WaldHi, &p.BootLo, &p.BootHi, &p.Fixed, &p.AtBound); err != nil {
			return nil, s.e.translate(err)
		}
		r.Params = append(r.Params, p)
	}
	return r, s.e.translate(rows.Err())
}

func scanFitRun(row rowScanner) (*FitRun, error) {
	var r FitRun
	var t dbTime
	var assay, compound, refit *string
	err := row.Scan(&r.ID, &t, &r.SubmittedBy, &assay, &compound, &refit, &r.Model, &r.Status, &r.LogEC50,
		&r.EngineVersion, &r.InputSHA256, &r.Settings, &r.Input, &r.Result, &r.Labels)
	if err != nil {
		return nil, err
	}
	r.CreatedAt = t.t
	r.AssayID, r.CompoundID, r.RefitOf = deref(assay), deref(compound), deref(refit)
	return &r, nil
}

// MaxListLimit bounds a page of FitRuns.
const MaxListLimit = 1000

func (s *sqlStore) FitRuns(ctx context.Context, f FitFilter) ([]FitRun, string, error) {
	limit := f.Limit
	if limit == 0 {
		limit = 100
	}
	if limit < 0 || limit > MaxListLimit {
		return nil, "", fmt.Errorf("limit %d is outside 1–%d", f.Limit, MaxListLimit)
	}
	var where []string
	var args []any
	add := func(cond string, v any) {
		args = append(args, v)
		where = append(where, strings.ReplaceAll(cond, "?", "$"+strconv.Itoa(len(args))))
	}
	if f.AssayID != "" {
		add("assay_id = ?", f.AssayID)
	}
	if f.CompoundID != "" {
		add("compound_id = ?", f.CompoundID)
	}
	if !f.From.IsZero() {
		add("created_at >= ?", s.e.timeArg(f.From))
	}
	if !f.To.IsZero() {
		add("created_at < ?", s.e.timeArg(f.To))
	}
	if f.Cursor != "" {
		add("id < ?", f.Cursor)
	}
	q := "SELECT " + fitCols + " FROM fit_runs"
	if len(where) > 0 {
		q += " WHERE " + strings.Join(where, " AND ")
	}
	// IDs are time-ordered (UUIDv7), so id order is creation order.
	args = append(args, limit+1)
	q += " ORDER BY id DESC LIMIT $" + strconv.Itoa(len(args))
	rows, err := s.e.query(ctx, q, args...)
	if err != nil {
		return nil, "", s.e.translate(err)
	}
	defer rows.Close()
	var out []FitRun
	for rows.Next() {
		r, err := scanFitRun(rows)
		if err != nil {
			return nil, "", s.e.translate(err)
		}
		out = append(out, *r)
	}
	if err := rows.Err(); err != nil {
		return nil, "", s.e.translate(err)
	}
	next := ""
	if len(out) > limit {
		out = out[:limit]
		next = out[limit-1].ID
	}
	return out, next, nil
}

const tokenCols = "id, name, scope, hash, created_at, revoked_at"

func (w *sqlWriter) InsertToken(ctx context.Context, t *Token) error {
	return w.e.translate(w.q.exec(ctx, "INSERT INTO api_tokens (id, name, scope, hash, created_at) VALUES ($1, $2, $3, $4, $5)",
		t.ID, t.Name, t.Scope, t.Hash, w.e.timeArg(t.CreatedAt)))
}

func (w *sqlWriter) UpsertToken(ctx context.Context, t *Token) error {
	return w.e.translate(w.q.exec(ctx, "INSERT INTO api_tokens (id, name, scope, hash, created_at) VALUES ($1, $2, $3, $4, $5) "+
		"ON CONFLICT (name) DO UPDATE SET hash = excluded.hash, scope = excluded.scope, revoked_at = NULL",
		t.ID, t.Name, t.Scope, t.Hash, w.e.timeArg(t.CreatedAt)))
}

func (s *sqlStore) TokenByHash(ctx context.Context, hash string) (*Token, error) {
	var t Token
	var c dbTime
	var revoked *dbTime
	err := s.e.queryRow(ctx, "SELECT "+tokenCols+" FROM api_tokens WHERE hash = $1 AND revoked_at IS NULL", hash).
		Scan(&t.ID, &t.Name, &t.Scope, &t.Hash, &c, &revoked)
	if err != nil {
		return nil, s.e.translate(err)
	}
	t.CreatedAt = c.t
	return &t, nil
}

func (w *sqlWriter) InsertAudit(ctx context.Context, e *AuditEntry) error {
	detail := e.Detail
	if len(detail) == 0 {
		detail = []byte("{}")
	}
	return w.e.translate(w.q.exec(ctx, "INSERT INTO audit_log (at, actor, action, target, detail) VALUES ($1, $2, $3, $4, $5)",
		w.e.timeArg(e.At), e.Actor, e.Action, e.Target, string(detail)))
}

func (s *sqlStore) Audit(ctx context.Context, limit int) ([]AuditEntry, error) {
	rows, err := s.e.query(ctx, "SELECT at, actor, action, target, detail FROM audit_log ORDER BY id DESC LIMIT $1", limit)
	if err != nil {
		return nil, s.e.translate(err)
	}
	defer rows.Close()
	var out []AuditEntry
	for rows.Next() {
		var e AuditEntry
		var t dbTime
		if err := rows.Scan(&t, &e.Actor, &e.Action, &e.Target, &e.Detail); err != nil {
			return nil, s.e.translate(err)
		}
		e.At = t.t
		out = append(out, e)
	}
	return out, s.e.translate(rows.Err())
}

func (w *sqlWriter) InsertIdempotent(ctx context.Context, r *Idempotent) error {
	return w.e.translate(w.q.exec(ctx, "INSERT INTO idempotency_keys (actor, key, request_sha256, status, content_type, body, created_at) "+
		"VALUES ($1, $2, $3, $4, $5, $6, $7)",
		r.Actor, r.Key, r.RequestSHA256, r.Status, r.ContentType, r.Body, w.e.timeArg(r.CreatedAt)))
}

func (s *sqlStore) Idempotent(ctx context.Context, actor, key string) (*Idempotent, error) {
	var r Idempotent
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT actor, key, request_sha256, status, content_type, body, created_at "+
		"FROM idempotency_keys WHERE actor = $1 AND key = $2", actor, key).
		Scan(&r.Actor, &r.Key, &r.RequestSHA256, &r.Status, &r.ContentType, &r.Body, &t)
	if err != nil {
		return nil, s.e.translate(err)
	}
	r.CreatedAt = t.t
	return &r, nil
}

var _ Store = (*sqlStore)(nil)
