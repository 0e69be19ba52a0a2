package api

import (
	"bytes"
	"errors"
	"io"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/db"
)

// idemOf builds a request's idempotency from its Idempotency-Key header
// (nil without one): the route, the query parameters except wait (which
// changes only how the caller is answered) and the body.
func idemOf(c *gin.Context, body []byte) (*service.Idem, error) {
	params := map[string]string{}
	for k, vs := range c.Request.URL.Query() {
		if k != "wait" {
			params[k] = strings.Join(vs, "\x00")
		}
	}
	return service.NewIdem(c.GetHeader("Idempotency-Key"), c.Request.Method+" "+c.FullPath(), params, body)
}

// writeReply sends a use case's reply; a replayed one is marked
// Idempotency-Replayed: true.
func writeReply(c *gin.Context, r *service.Reply) {
	if r.Location != "" {
		c.Header("Location", r.Location)
	}
	if r.Replayed {
		c.Header("Idempotency-Replayed", "true")
	}
	c.Data(r.Status, r.ContentType, r.Body)
}

const idemKey = "sluice.idempotency"

// idempotency is the Idempotency-Key header for the routes whose handlers
// still store through respond: a retry with the same key and request gets
// the original response; the same key with another request is a 409. The
// use cases of api/service do this themselves (service.NewIdem).
func (s *Server) idempotency(c *gin.Context) {
	if c.GetHeader("Idempotency-Key") == "" {
		c.Next()
		return
	}
	body, err := readBody(c)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Request.Body = io.NopCloser(bytes.NewReader(body))
	req, err := idemOf(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	if s.replay(c, req) {
		return
	}
	c.Set(idemKey, req)
	c.Next()
}

// replay answers from a stored record and reports whether it did.
func (s *Server) replay(c *gin.Context, req *service.Idem) bool {
	rec, err := s.store.Idempotent(c.Request.Context(), actor(c), req.Key)
	if errors.Is(err, db.ErrNotFound) {
		return false
	}
	if err != nil {
		s.writeProblem(c, err)
		return true
	}
	if rec.RequestSHA256 != req.Hash {
		s.writeProblem(c, &service.Error{Kind: service.ErrConflict,
			Detail: "this Idempotency-Key was used for a different request; use a new key"})
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
	if body, stored := s.commitBuilt(c, status, contentType, build, write); stored {
		c.Data(status, contentType, body)
	}
}

// commitBuilt runs write and stores the response it builds with the
// request's idempotency record, in one transaction. It reports stored
// false when it has answered instead: with a problem, or with the reply of
// a concurrent request with the same key that won the race.
func (s *Server) commitBuilt(c *gin.Context, status int, contentType string, build func() []byte, write func(db.Writer) error) (body []byte, stored bool) {
	v, keyed := c.Get(idemKey)
	ctx := c.Request.Context()
	err := s.store.Write(ctx, func(w db.Writer) error {
		if write != nil {
			if err := write(w); err != nil {
				return err
			}
		}
		body = build()
		if keyed {
			req := v.(*service.Idem)
			return w.InsertIdempotent(ctx, &db.Idempotent{Actor: actor(c), Key: req.Key, RequestSHA256: req.Hash,
				Status: status, ContentType: contentType, Body: body, CreatedAt: s.now()})
		}
		return nil
	})
	if keyed && errors.Is(err, db.ErrExists) && s.replay(c, v.(*service.Idem)) {
		return nil, false
	}
	if err != nil {
		s.writeProblem(c, err)
		return nil, false
	}
	return body, true
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
