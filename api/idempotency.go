package api

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"

	"github.com/gin-gonic/gin"

	"sluice/db"
)

// MaxIdempotencyKey bounds the Idempotency-Key header.
const MaxIdempotencyKey = 255

const idemKey = "sluice.idempotency"

// idemRequest is a POST's key and the hash of what it asked.
type idemRequest struct {
	key, hash string
}

// idempotency implements the Idempotency-Key header on POSTs: a retry with
// the same key and body gets the original response (marked
// Idempotency-Replayed: true); the same key with another body is a 409.
// Keys belong to the token that used them. The record is written in the
// same transaction as whatever the request stored (see respond).
func (s *Server) idempotency(c *gin.Context) {
	key := c.GetHeader("Idempotency-Key")
	if key == "" {
		c.Next()
		return
	}
	if len(key) > MaxIdempotencyKey {
		s.writeProblem(c, &requestError{kind: errBadRequest, detail: fmt.Sprintf("Idempotency-Key is longer than %d bytes", MaxIdempotencyKey)})
		return
	}
	body, err := readBody(c)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Request.Body = io.NopCloser(bytes.NewReader(body))
	h := sha256.New()
	fmt.Fprintf(h, "%s %s?%s\n", c.Request.Method, c.Request.URL.Path, c.Request.URL.RawQuery)
	h.Write(body)
	req := idemRequest{key: key, hash: hex.EncodeToString(h.Sum(nil))}
	if s.replay(c, req) {
		return
	}
	c.Set(idemKey, req)
	c.Next()
}

// replay answers from a stored record and reports whether it did.
func (s *Server) replay(c *gin.Context, req idemRequest) bool {
	rec, err := s.store.Idempotent(c.Request.Context(), actor(c), req.key)
	if errors.Is(err, db.ErrNotFound) {
		return false
	}
	if err != nil {
		s.writeProblem(c, err)
		return true
	}
	if rec.RequestSHA256 != req.hash {
		s.writeProblem(c, &requestError{kind: errIdempotencyBody,
			detail: "this Idempotency-Key was used for a different request; use a new key"})
		return true
	}
	c.Header("Idempotency-Replayed", "true")
	c.Data(rec.Status, rec.ContentType, rec.Body)
	c.Abort()
	return true
}

// respondBuilt is respond for a body known only once the write has run
// (e.g. it holds an ID the transaction created).
func (s *Server) respondBuilt(c *gin.Context, status int, contentType string, build func() []byte, write func(db.Writer) error) {
	v, keyed := c.Get(idemKey)
	ctx := c.Request.Context()
	var body []byte
	err := s.store.Write(ctx, func(w db.Writer) error {
		if write != nil {
			if err := write(w); err != nil {
				return err
			}
		}
		body = build()
		if keyed {
			req := v.(idemRequest)
			return w.InsertIdempotent(ctx, &db.Idempotent{Actor: actor(c), Key: req.key, RequestSHA256: req.hash,
				Status: status, ContentType: contentType, Body: body, CreatedAt: s.now()})
		}
		return nil
	})
	if keyed && errors.Is(err, db.ErrExists) && s.replay(c, v.(idemRequest)) {
		return
	}
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Data(status, contentType, body)
}

// respond stores what the request wrote (write, may be nil) together with
// its idempotency record in one transaction, then sends the response. When
// a concurrent request with the same key won the race, its response is
// replayed instead and nothing of this one is kept.
func (s *Server) respond(c *gin.Context, status int, contentType string, body []byte, write func(db.Writer) error) {
	if _, keyed := c.Get(idemKey); !keyed && write == nil {
		c.Data(status, contentType, body)
		return
	}
	s.respondBuilt(c, status, contentType, func() []byte { return body }, write)
}
