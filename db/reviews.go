package db

import (
	"context"
	"strconv"
	"strings"
	"time"
)

// Review decisions.
const (
	ReviewAccepted = "accepted"
	ReviewRejected = "rejected"
)

// Review is one review event of a curve result. Events are appended, never
// changed; a curve's latest event (by At, then ID) is its review state.
type Review struct {
	ID       string
	CurveID  string
	Decision string // ReviewAccepted or ReviewRejected
	Reason   string
	Actor    string
	At       time.Time
}

func (w *sqlWriter) InsertReview(ctx context.Context, r *Review) error {
	return w.insert(ctx, "InsertReview", r.ID, "INSERT INTO curve_reviews (id, curve_id, decision, reason, actor, at) VALUES ($1, $2, $3, $4, $5, $6)",
		r.ID, r.CurveID, r.Decision, r.Reason, r.Actor, w.e.timeArg(r.At))
}

// Reviews returns the review events of the given curves, oldest first per
// curve (by curve, at, id): the last of a curve's events is its state.
func (s *sqlStore) Reviews(ctx context.Context, curveIDs []string) ([]Review, error) {
	return queryReviews(ctx, s.e, s.e, curveIDs)
}

// queryReviews is Reviews on q (the pool or a transaction).
func queryReviews(ctx context.Context, q querier, e engine, curveIDs []string) ([]Review, error) {
	const op = "Reviews"
	var out []Review
	// In chunks, so that no statement has too many parameters.
	for len(curveIDs) > 0 {
		chunk := curveIDs[:min(len(curveIDs), 500)]
		curveIDs = curveIDs[len(chunk):]
		args := make([]any, len(chunk))
		marks := make([]string, len(chunk))
		for i, id := range chunk {
			args[i], marks[i] = id, "$"+strconv.Itoa(i+1)
		}
		rows, err := q.query(ctx, "SELECT id, curve_id, decision, reason, actor, at FROM curve_reviews WHERE curve_id IN ("+
			strings.Join(marks, ", ")+") ORDER BY curve_id, at, id", args...)
		if err != nil {
			return nil, opError(op, "", err, e.classify)
		}
		for rows.Next() {
			var r Review
			var t dbTime
			if err := rows.Scan(&r.ID, &r.CurveID, &r.Decision, &r.Reason, &r.Actor, &t); err != nil {
				rows.Close()
				return nil, opError(op, "", err, e.classify)
			}
			r.At = t.t
			out = append(out, r)
		}
		err = rows.Err()
		rows.Close()
		if err != nil {
			return nil, opError(op, "", err, e.classify)
		}
	}
	return out, nil
}

// Refit records what a refit left out: the new curve result CurveID is a
// version of RefitOf without Exclusions (a JSON array of point indices or
// well names), for Reason.
type Refit struct {
	CurveID    string
	RefitOf    string
	Exclusions []byte // JSON array
	Reason     string
}

// InsertRefit stores a refit: its curve result and what it left out.
func (w *sqlWriter) InsertRefit(ctx context.Context, r *CurveResult, f *Refit) error {
	const op = "InsertRefit"
	args, field := w.resultArgs(r)
	if field != "" {
		return w.invalid(op, r.ID, field)
	}
	ex, ok := jsonDoc(f.Exclusions, "")
	if !ok || ex == nil {
		return w.invalid(op, r.ID, "exclusions")
	}
	if err := w.insert(ctx, op, r.ID, resultInsert, args...); err != nil {
		return err
	}
	_, err := w.exec(ctx, op, r.ID, "INSERT INTO curve_refits (curve_id, refit_of, exclusions, reason) VALUES ($1, $2, $3, $4)",
		f.CurveID, f.RefitOf, ex, f.Reason)
	return err
}

// CurveRefit returns what the refit id left out; ErrNotFound when id is
// not a refit.
func (s *sqlStore) CurveRefit(ctx context.Context, id string) (*Refit, error) {
	var f Refit
	err := s.e.queryRow(ctx, "SELECT curve_id, refit_of, exclusions, reason FROM curve_refits WHERE curve_id = $1", id).
		Scan(&f.CurveID, &f.RefitOf, &f.Exclusions, &f.Reason)
	if err != nil {
		return nil, s.read("CurveRefit", id, err)
	}
	return &f, nil
}

// MSRStudy is a stored replicate-experiment study: the request as sent
// and the result as answered.
type MSRStudy struct {
	ID        string
	AssayID   string
	CreatedAt time.Time
	CreatedBy string
	Request   []byte // JSON
	Result    []byte // JSON, as answered
}

func (w *sqlWriter) InsertMSRStudy(ctx context.Context, m *MSRStudy) error {
	const op = "InsertMSRStudy"
	req, ok := jsonDoc(m.Request, "")
	if !ok || req == nil {
		return w.invalid(op, m.ID, "request")
	}
	res, ok := jsonDoc(m.Result, "")
	if !ok || res == nil {
		return w.invalid(op, m.ID, "result")
	}
	return w.insert(ctx, op, m.ID, "INSERT INTO msr_studies (id, assay_id, created_at, created_by, request, result) VALUES ($1, $2, $3, $4, $5, $6)",
		m.ID, m.AssayID, w.e.timeArg(m.CreatedAt), m.CreatedBy, req, res)
}

func (s *sqlStore) MSRStudy(ctx context.Context, id string) (*MSRStudy, error) {
	var m MSRStudy
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT id, assay_id, created_at, created_by, request, result FROM msr_studies WHERE id = $1", id).
		Scan(&m.ID, &m.AssayID, &t, &m.CreatedBy, &m.Request, &m.Result)
	if err != nil {
		return nil, s.read("MSRStudy", id, err)
	}
	m.CreatedAt = t.t
	return &m, nil
}
