package service

import (
	"context"
	"encoding/json"
	"fmt"
	"net/http"
	"strings"

	"sluice/api/wire"
	"sluice/db"
)

// MaxReasonLength bounds a review's or a refit's reason in bytes.
const MaxReasonLength = 2000

// Review is POST /v1/curves/{id}/review: it appends a review event (who,
// when, why) to a stored curve of either kind; the latest event is the
// curve's review state, and a rejected curve leaves its history's summary.
// The curve itself is never changed. A reason is required to reject.
func (s *Service) Review(ctx context.Context, who Caller, idem *Idem, curveID string, req *wire.ReviewRequest) (*Reply, error) {
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		if req.Decision != db.ReviewAccepted && req.Decision != db.ReviewRejected {
			return plan{}, Invalid("/decision", "decision must be %q or %q, got %q", db.ReviewAccepted, db.ReviewRejected, req.Decision)
		}
		if err := checkReason(req.Reason, req.Decision == db.ReviewRejected, "to reject a curve"); err != nil {
			return plan{}, err
		}
		if _, err := s.store.CurvePotency(ctx, curveID); err != nil {
			return plan{}, err
		}
		ev := &db.Review{ID: s.newID(), CurveID: curveID, Decision: req.Decision, Reason: req.Reason, Actor: who.Name, At: s.now()}
		reply, err := jsonReply(http.StatusCreated, reviewOut(*ev), "/v1/curves/"+curveID)
		if err != nil {
			return plan{}, err
		}
		detail, err := json.Marshal(map[string]string{"decision": ev.Decision, "reason": ev.Reason, "review_id": ev.ID})
		if err != nil {
			return plan{}, fmt.Errorf("audit detail: %w", err)
		}
		return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
			if err := w.InsertReview(ctx, ev); err != nil {
				return nil, fmt.Errorf("store review of %s: %w", curveID, err)
			}
			if err := w.InsertAudit(ctx, &db.AuditEntry{At: ev.At, Actor: who.Name, Action: "curve.review", Target: curveID,
				Detail: detail}); err != nil {
				return nil, fmt.Errorf("audit review of %s: %w", curveID, err)
			}
			return reply, nil
		}}, nil
	})
}

// checkReason checks a free-text reason; why says what needs it.
func checkReason(reason string, required bool, why string) error {
	if required && strings.TrimSpace(reason) == "" {
		return Invalid("/reason", "a reason is required %s", why)
	}
	if len(reason) > MaxReasonLength {
		return Invalid("/reason", "the reason is longer than %d bytes", MaxReasonLength)
	}
	return checkText("/reason", reason)
}
