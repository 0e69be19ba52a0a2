// Package api is Sluice's HTTP edge: the gin router, handlers, request
// validation into RFC 9457 problem details, authentication, idempotency and
// metrics. It depends on a db.Store and on the fit engine.
package api

import (
	"context"
	"crypto/rand"
	"log/slog"
	"net/http"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/google/uuid"
	"github.com/prometheus/client_golang/prometheus"

	"sluice/api/service"
	"sluice/api/web"
	"sluice/db"
)

// Config holds the settings the handlers need.
type Config struct {
	// BodyLimit bounds a request body in bytes; zero means 10 MiB.
	BodyLimit int64
	// AuthDisabled lets every request in as "anonymous" with every scope.
	// The command refuses it on a non-loopback address.
	AuthDisabled bool
	// FitWorkers is the goroutines one fit's bootstrap may use; zero
	// means GOMAXPROCS.
	FitWorkers int
	// IdempotencyRetention and MaxStoredReply are service.Deps' (zero:
	// 24 h and 256 KiB).
	IdempotencyRetention time.Duration
	MaxStoredReply       int
	// Web configures the dashboard (its AuthDisabled follows the API's).
	Web web.Config
}

// DefaultBodyLimit is the request-body limit when Config.BodyLimit is zero.
const DefaultBodyLimit = 10 << 20

// Deps are the server's collaborators.
type Deps struct {
	Store    db.Store
	Registry *prometheus.Registry // metrics are registered here, not globally
	Log      *slog.Logger
	// Now and NewID default to the clock and UUIDv7; tests may fix them.
	Now   func() time.Time
	NewID func() string
	// Budget bounds synchronous work (service.Budget; zero means its
	// defaults).
	Budget service.Budget
}

// Server serves the API: it translates HTTP to the use cases of its
// service and back.
type Server struct {
	cfg     Config
	store   db.Store
	log     *slog.Logger
	metrics *metrics
	now     func() time.Time
	newID   func() string
	svc     *service.Service
	tokens  *tokenCache
	site    *web.Site
	engine  *gin.Engine
	ops     *gin.Engine // health and metrics only, for --role worker
	// draining is cancelled by Drain: requests that wait (POST
	// /v1/plates?wait=) answer at once instead.
	draining context.Context
	drain    context.CancelFunc
}

// New builds the server and its routes.
func New(cfg Config, d Deps) (*Server, error) {
	if cfg.BodyLimit == 0 {
		cfg.BodyLimit = DefaultBodyLimit
	}
	s := &Server{cfg: cfg, store: d.Store, log: d.Log, now: d.Now, newID: d.NewID}
	if s.log == nil {
		s.log = slog.New(slog.DiscardHandler)
	}
	if s.now == nil {
		s.now = func() time.Time { return time.Now().UTC().Truncate(time.Microsecond) }
	}
	if s.newID == nil {
		s.newID = func() string { return uuid.Must(uuid.NewV7()).String() }
	}
	s.tokens = &tokenCache{store: d.Store, now: time.Now}
	reg := d.Registry
	if reg == nil {
		reg = prometheus.NewRegistry()
	}
	m, err := newMetrics(reg, d.Store, s.log)
	if err != nil {
		return nil, err
	}
	s.metrics = m
	s.svc, err = service.New(service.Deps{Store: d.Store, Now: s.now, NewID: s.newID, Log: s.log,
		FitWorkers: cfg.FitWorkers, Budget: d.Budget, Observer: m,
		IdempotencyRetention: cfg.IdempotencyRetention, MaxStoredReply: cfg.MaxStoredReply})
	if err != nil {
		return nil, err
	}
	wc := cfg.Web
	wc.AuthDisabled = cfg.AuthDisabled
	s.site, err = web.New(wc, web.Deps{Service: s.svc, Store: d.Store, Log: s.log, Now: s.now})
	if err != nil {
		return nil, err
	}
	s.draining, s.drain = context.WithCancel(context.Background())
	s.engine = s.routes(reg)
	s.ops = s.opsRoutes(reg)
	return s, nil
}

// Handler returns the HTTP handler.
func (s *Server) Handler() http.Handler { return s.engine }

// randomBytes fills b from the system's secure source.
func randomBytes(b []byte) { rand.Read(b) }

// Service is the use-case layer the handlers call; the plate workers run
// its RunPlateJob.
func (s *Server) Service() *service.Service { return s.svc }

// Drain tells requests that are waiting for a plate to answer now, with
// where to look later (202), so that a graceful shutdown need not wait for
// them: pass it to http.Server.RegisterOnShutdown.
func (s *Server) Drain() { s.drain() }
