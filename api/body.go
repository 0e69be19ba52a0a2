package api

import (
	"fmt"
	"io"
	"net/http"
	"strconv"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
)

// Request bodies are read against a deadline in proportion to their size,
// so that a client sending slowly cannot hold a connection (and its slot
// under the connection cap, LimitListener) for longer than an honest
// upload of that size takes:
//
//	deadline = now + BodyBaseTimeout + size / MinBodyRate
//
// where size is the declared Content-Length or, for a chunked body, the
// body limit. With the default 10 MiB limit a body may take up to 90 s; a
// 100 KB plate, 10.8 s.
const (
	// BodyBaseTimeout is the deadline of an empty body: the round trips
	// and a client's pause before it sends.
	BodyBaseTimeout = 10 * time.Second
	// MinBodyRate is the slowest upload accepted, in bytes per second
	// (128 KiB/s, about 1 Mbit/s).
	MinBodyRate = 128 << 10
)

// bodyPace says the rule to a client whose body came too slowly.
var bodyPace = fmt.Sprintf("a body must arrive within %v plus one second per %d KiB", BodyBaseTimeout, MinBodyRate>>10)

// BodyReadTimeout is the time a body of size bytes may take to arrive.
// `serve` sets http.Server.ReadTimeout to BodyReadTimeout(body limit), the
// ceiling for any request; limitBody sets each request's own.
func BodyReadTimeout(size int64) time.Duration {
	return BodyBaseTimeout + time.Duration(float64(size)/MinBodyRate*float64(time.Second))
}

const bodyKey = "sluice.body"

// limitBody caps every request body (http.MaxBytesReader); reading past
// the cap fails with a 413 problem, and a declared Content-Length over it
// is a 413 at once, before any byte of the body is read (writeProblem
// closes the connection). It sets the body's read deadline
// (BodyReadTimeout of its declared size) and lifts it when the body has
// been read whole, so that a long computation after the upload is not cut
// off by it.
func (s *Server) limitBody(c *gin.Context) {
	if c.Request.ContentLength > s.cfg.BodyLimit {
		s.writeProblem(c, &service.Error{Kind: errTooLarge, Detail: "the body is larger than the limit of " +
			strconv.FormatInt(s.cfg.BodyLimit, 10) + " bytes"})
		return
	}
	rc := http.NewResponseController(c.Writer)
	if c.Request.ContentLength == 0 {
		rc.SetReadDeadline(time.Time{}) // no body to wait for
		c.Next()
		return
	}
	size := c.Request.ContentLength
	if size < 0 {
		size = s.cfg.BodyLimit // chunked: its size is unknown until its end
	}
	// Not every ResponseWriter (httptest's) has a connection: then there
	// is no deadline to set, and no error to report.
	rc.SetReadDeadline(time.Now().Add(BodyReadTimeout(size)))
	b := &trackedBody{ReadCloser: http.MaxBytesReader(c.Writer, c.Request.Body, s.cfg.BodyLimit),
		done: func() { rc.SetReadDeadline(time.Time{}) }}
	c.Request.Body = b
	c.Set(bodyKey, b)
	c.Next()
}

// trackedBody notes when its end has been read.
type trackedBody struct {
	io.ReadCloser
	eof  bool
	done func()
}

func (b *trackedBody) Read(p []byte) (int, error) {
	n, err := b.ReadCloser.Read(p)
	if err == io.EOF && !b.eof {
		b.eof = true
		b.done()
	}
	return n, err
}

// bodyUnread reports whether the request has a body not read to its end:
// an answer now leaves it on the connection.
func bodyUnread(c *gin.Context) bool {
	if c.Request.ContentLength == 0 {
		return false
	}
	if b, ok := c.Get(bodyKey); ok {
		return !b.(*trackedBody).eof
	}
	return true
}
