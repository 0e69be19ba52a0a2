package service

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"slices"

	"sluice/db"
)

// MaxIdempotencyKey bounds an Idempotency-Key in bytes.
const MaxIdempotencyKey = 255

// DefaultMaxStoredReply is the stored-reply cap when Deps.MaxStoredReply
// is zero: 256 KiB, far above a write's reply (a plate's 202 is about
// 100 bytes, a stored fit's result a few KiB) and a bound on what one
// request can add to the idempotency table.
const DefaultMaxStoredReply = 256 << 10

// Idem is an idempotent request: its key and the hash of what it asks.
// A nil *Idem is a request without a key.
type Idem struct {
	Key  string
	Hash string // hex SHA-256 of the route, the parameters and the body
}

// NewIdem validates key and hashes what the request asks: the route (e.g.
// "POST /v1/plates"), the query parameters that change what is stored
// (never ones like wait, which only change how the caller is answered) and
// the body. An empty key gives nil: the request is not idempotent.
func NewIdem(key, route string, params map[string]string, body []byte) (*Idem, error) {
	if key == "" {
		return nil, nil
	}
	if len(key) > MaxIdempotencyKey {
		return nil, &Error{Kind: ErrBadRequest, Detail: fmt.Sprintf("Idempotency-Key is longer than %d bytes", MaxIdempotencyKey)}
	}
	// Printable ASCII only: a header value's other bytes are obs-text
	// (RFC 9110 §5.5) whose meaning proxies and clients disagree on.
	for i := 0; i < len(key); i++ {
		if key[i] < 0x20 || key[i] > 0x7e {
			return nil, &Error{Kind: ErrBadRequest, Detail: "Idempotency-Key must be printable ASCII (0x20–0x7E)"}
		}
	}
	h := sha256.New()
	field(h, route)
	names := make([]string, 0, len(params))
	for k := range params {
		names = append(names, k)
	}
	slices.Sort(names)
	for _, k := range names {
		field(h, k)
		field(h, params[k])
	}
	field(h, string(body))
	return &Idem{Key: key, Hash: hex.EncodeToString(h.Sum(nil))}, nil
}

// field writes s length-prefixed, so that no two lists hash alike.
func field(h hash.Hash, s string) {
	var n [8]byte
	binary.BigEndian.PutUint64(n[:], uint64(len(s)))
	h.Write(n[:])
	h.Write([]byte(s))
}

// Reply is what a write answers. It is stored with the request's key, so a
// replay is byte-identical, status included.
type Reply struct {
	Status      int
	ContentType string
	Body        []byte
	// Location is the stored record's path, "" for none.
	Location string
	// Replayed is true when the reply is a stored one.
	Replayed bool
}

// commitFunc stores what a request wrote inside the transaction and
// returns its reply.
type commitFunc func(ctx context.Context, w db.Writer) (*Reply, error)

// plan is what a write use case has prepared outside the transaction:
// either the reply itself, when nothing but the reply is to be stored (a
// calculator, a fit with store false), or the commit that stores the
// request's records and returns the reply.
type plan struct {
	reply  *Reply
	commit commitFunc
}

// write is the one path of every write use case:
//
//  1. a stored reply for idem's key is replayed before any work is done
//     (another request under that key is ErrConflict);
//  2. prepare does the work (validation, numerics) and returns its plan;
//  3. the plan's records are stored in one transaction that also stores
//     the reply with the key (without a key, a plan that is only a reply
//     opens no transaction);
//  4. when a concurrent request with the same key committed first (its key
//     exists), its reply is returned and nothing of this one is kept.
//
// A reply whose body is over the stored-reply cap (Deps.MaxStoredReply)
// is stored without its body (db.Idempotent.OmittedBytes): the key still
// guards against doing the write twice, and a replay is a 409 that says
// what happened (replay).
func (s *Service) write(ctx context.Context, who Caller, idem *Idem, prepare func(ctx context.Context) (plan, error)) (*Reply, error) {
	return s.writeKeeping(ctx, who, idem, true, prepare)
}

// calculate is write for the calculators of read scope (POST
// /v1/potential, /v1/operational, /v1/qc/rules), which store nothing but
// their reply: a reply computed at once is not stored under its key —
// replaying it is as cheap as recomputing it, and a read token then cannot
// grow the database — so their Idempotency-Key is accepted and checked but
// ignored. A request over the synchronous budget stores a queued analysis,
// and its key with it, as write does.
func (s *Service) calculate(ctx context.Context, who Caller, idem *Idem, prepare func(ctx context.Context) (plan, error)) (*Reply, error) {
	return s.writeKeeping(ctx, who, idem, false, prepare)
}

// writeKeeping is write; keepReplies false stores no record for a plan
// that is only a reply.
func (s *Service) writeKeeping(ctx context.Context, who Caller, idem *Idem, keepReplies bool, prepare func(ctx context.Context) (plan, error)) (*Reply, error) {
	if r, err := s.replay(ctx, who, idem); r != nil || err != nil {
		return r, err
	}
	p, err := prepare(ctx)
	if err != nil {
		return nil, err
	}
	if p.commit == nil && (idem == nil || !keepReplies) {
		return p.reply, nil
	}
	reply := p.reply
	err = s.store.Write(ctx, func(w db.Writer) error {
		if p.commit != nil {
			r, err := p.commit(ctx, w)
			if err != nil {
				return err
			}
			reply = r
		}
		if idem != nil {
			rec := &db.Idempotent{Actor: who.Name, Key: idem.Key, RequestSHA256: idem.Hash,
				Status: reply.Status, ContentType: reply.ContentType, Body: reply.Body, Location: reply.Location, CreatedAt: s.now()}
			if len(rec.Body) > s.maxStoredReply {
				rec.Body, rec.OmittedBytes = nil, int64(len(reply.Body))
			}
			if err := w.InsertIdempotent(ctx, rec); err != nil {
				return fmt.Errorf("store reply for key %q: %w", idem.Key, err)
			}
		}
		return nil
	})
	if idem != nil && errors.Is(err, db.ErrExists) {
		// Either a concurrent request under this key won, or the record
		// itself exists; only the first is answered from the store.
		if r, rerr := s.replay(ctx, who, idem); r != nil || rerr != nil {
			return r, rerr
		}
	}
	if err != nil {
		return nil, err
	}
	return reply, nil
}

// replay returns the stored reply for idem's key, nil when there is none.
func (s *Service) replay(ctx context.Context, who Caller, idem *Idem) (*Reply, error) {
	if idem == nil {
		return nil, nil
	}
	rec, err := s.store.Idempotent(ctx, who.Name, idem.Key)
	if errors.Is(err, db.ErrNotFound) {
		return nil, nil
	}
	if err != nil {
		return nil, fmt.Errorf("look up key %q: %w", idem.Key, err)
	}
	if rec.RequestSHA256 != idem.Hash {
		return nil, &Error{Kind: ErrConflict, Detail: "this Idempotency-Key was used for a different request; use a new key"}
	}
	if rec.OmittedBytes > 0 {
		where := ""
		if rec.Location != "" {
			where = "; what it stored is at " + rec.Location
		}
		return nil, &Error{Kind: ErrConflict, Detail: fmt.Sprintf("the request under this Idempotency-Key was done (status %d), "+
			"but its reply (%d bytes) was over the %d-byte limit of stored replies and cannot be replayed%s; "+
			"it will not be done again under this key", rec.Status, rec.OmittedBytes, s.maxStoredReply, where)}
	}
	return &Reply{Status: rec.Status, ContentType: rec.ContentType, Body: rec.Body, Location: rec.Location, Replayed: true}, nil
}

// jsonReply encodes v as a JSON reply.
func jsonReply(status int, v any, location string) (*Reply, error) {
	b, err := json.Marshal(v)
	if err != nil {
		return nil, fmt.Errorf("encode reply: %w", err)
	}
	return &Reply{Status: status, ContentType: "application/json", Body: b, Location: location}, nil
}
