package db

import "context"

func (w *sqlWriter) InsertAudit(ctx context.Context, e *AuditEntry) error {
	detail, ok := jsonDoc(e.Detail, "{}")
	if !ok {
		return w.invalid("InsertAudit", e.Target, "detail")
	}
	return w.later(ctx, "InsertAudit", e.Target, "INSERT INTO audit_log (at, actor, action, target, detail) VALUES ($1, $2, $3, $4, $5)",
		w.e.timeArg(e.At), e.Actor, e.Action, e.Target, detail)
}

func (s *sqlStore) Audit(ctx context.Context, limit int) ([]AuditEntry, error) {
	rows, err := s.e.query(ctx, "SELECT at, actor, action, target, detail FROM audit_log ORDER BY id DESC LIMIT $1", limit)
	if err != nil {
		return nil, s.read("Audit", "", err)
	}
	defer rows.Close()
	var out []AuditEntry
	for rows.Next() {
		var e AuditEntry
		var t dbTime
		if err := rows.Scan(&t, &e.Actor, &e.Action, &e.Target, &e.Detail); err != nil {
			return nil, s.read("Audit", "", err)
		}
		e.At = t.t
		out = append(out, e)
	}
	return out, s.read("Audit", "", rows.Err())
}

func (w *sqlWriter) InsertIdempotent(ctx context.Context, r *Idempotent) error {
	body := r.Body
	if body == nil {
		body = []byte{} // NOT NULL: an omitted body is empty
	}
	return w.later(ctx, "InsertIdempotent", r.Key, "INSERT INTO idempotency_keys (actor, key, request_sha256, status, content_type, body, location, omitted_bytes, created_at) "+
		"VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)",
		r.Actor, r.Key, r.RequestSHA256, r.Status, r.ContentType, body, r.Location, r.OmittedBytes, w.e.timeArg(r.CreatedAt))
}

func (s *sqlStore) Idempotent(ctx context.Context, actor, key string) (*Idempotent, error) {
	var r Idempotent
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT actor, key, request_sha256, status, content_type, body, location, omitted_bytes, created_at "+
		"FROM idempotency_keys WHERE actor = $1 AND key = $2", actor, key).
		Scan(&r.Actor, &r.Key, &r.RequestSHA256, &r.Status, &r.ContentType, &r.Body, &r.Location, &r.OmittedBytes, &t)
	if err != nil {
		return nil, s.read("Idempotent", key, err)
	}
	r.CreatedAt = t.t
	return &r, nil
}
