package api

import (
	"net"
	"strconv"
	"sync"
	"time"

	"github.com/prometheus/client_golang/prometheus"
)

// DefaultMaxConns is the connection cap when LimitListener is given zero:
// far below the file descriptors a process may open (Go raises the soft
// limit to the hard one, typically 2^20 in containers; 1024 at the least),
// far above what a lab's pipelines and dashboards open at once.
const DefaultMaxConns = 1024

// LimitListener caps the connections served at once at max (zero means
// DefaultMaxConns). A connection over the cap is not left waiting in the
// kernel's queue, where a client cannot tell a full server from a dead
// one: it is accepted, answered 503 problem+json with Retry-After and
// Connection: close, and closed, without reading the request. At most
// refusing (64) such answers are written at once; past that, a connection
// over the cap is closed at once. sluice_http_connections_open and
// sluice_http_connections_refused_total count them.
//
// With slow clients holding every slot, new ones are refused until the
// slow ones hit their deadlines (the header and body read deadlines of
// the http.Server and Server.limitBody); behind a reverse proxy, the
// proxy's own buffering and limits come first (deploy/README.md).
func (s *Server) LimitListener(ln net.Listener, max int) net.Listener {
	if max <= 0 {
		max = DefaultMaxConns
	}
	return &limitListener{Listener: ln, slots: make(chan struct{}, max), refusing: make(chan struct{}, refusing),
		open: s.metrics.connsOpen, refused: s.metrics.connsRefused}
}

// refusing bounds the 503 answers being written at once.
const refusing = 64

// refuseTimeout bounds writing one refusal and the wait for the client to
// close after it.
const refuseTimeout = time.Second

type limitListener struct {
	net.Listener
	slots, refusing chan struct{}
	open            prometheus.Gauge
	refused         prometheus.Counter
}

func (l *limitListener) Accept() (net.Conn, error) {
	for {
		c, err := l.Listener.Accept()
		if err != nil {
			return nil, err
		}
		select {
		case l.slots <- struct{}{}:
			l.open.Inc()
			return &limitedConn{Conn: c, release: func() { <-l.slots; l.open.Dec() }}, nil
		default:
		}
		l.refused.Inc()
		select {
		case l.refusing <- struct{}{}:
			go func() {
				defer func() { <-l.refusing }()
				refuse(c)
			}()
		default:
			c.Close()
		}
	}
}

// connsBusy is the answer to a connection over the cap: written whole
// before the request is read, so it needs no parsing of the request.
var connsBusy = func() []byte {
	body := `{"type":"` + problemType + `service-unavailable","title":"Service Unavailable","status":503,` +
		`"detail":"the server has as many connections open as it serves at once; try again later"}`
	return []byte("HTTP/1.1 503 Service Unavailable\r\n" +
		"Content-Type: application/problem+json\r\n" +
		"Retry-After: " + retryAfter + "\r\n" +
		"Connection: close\r\n" +
		"Content-Length: " + strconv.Itoa(len(body)) + "\r\n\r\n" + body)
}()

// refuse answers c with connsBusy and closes it. It shuts its side of the
// connection down first and reads what the client still sends for a
// moment, so that the close does not reset the connection before the
// client has read the answer (a close with unread data sends RST).
func refuse(c net.Conn) {
	defer c.Close()
	c.SetDeadline(time.Now().Add(refuseTimeout))
	if _, err := c.Write(connsBusy); err != nil {
		return
	}
	if tc, ok := c.(*net.TCPConn); ok {
		tc.CloseWrite()
	}
	var buf [4096]byte
	for {
		if _, err := c.Read(buf[:]); err != nil {
			return
		}
	}
}

// limitedConn gives its slot back once, when closed.
type limitedConn struct {
	net.Conn
	once    sync.Once
	release func()
}

func (c *limitedConn) Close() error {
	err := c.Conn.Close()
	c.once.Do(c.release)
	return err
}
