package api

import (
	"context"
	"net/http"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"

	"sluice/api/service"
)

// healthz says the process serves; it checks nothing else.
func (s *Server) healthz(c *gin.Context) {
	c.JSON(http.StatusOK, gin.H{"status": "ok"})
}

// readyTimeout bounds the readiness probe's ping.
const readyTimeout = time.Second

// readyz says the database answers within readyTimeout; if not, it answers
// 503 (with Retry-After) saying why: no answer in time (frozen, or
// overloaded) or no connection at all (refused, reset, starting up). The
// process itself may be fine: /healthz stays 200, so an orchestrator takes
// the replica out of service without restarting it.
func (s *Server) readyz(c *gin.Context) {
	ctx, cancel := context.WithTimeout(c.Request.Context(), readyTimeout)
	defer cancel()
	if err := s.store.Ping(ctx); err != nil {
		if c.Request.Context().Err() != nil {
			s.writeProblem(c, err) // the prober went away: 499
			return
		}
		reason := "cannot be reached (connection refused, lost or not accepted)"
		if ctx.Err() != nil {
			reason = "did not answer within " + readyTimeout.String()
		}
		s.log.Warn("not ready", "err", err)
		s.writeProblem(c, &service.Error{Kind: errUnavailable, Detail: "the " + s.store.Engine() + " database " + reason})
		return
	}
	c.JSON(http.StatusOK, gin.H{"status": "ready", "database": s.store.Engine()})
}

// opsRoutes serves only the probes and the metrics: what a worker-only
// replica (`serve --role worker`) answers. Every other path is a 404
// problem.
func (s *Server) opsRoutes(reg *prometheus.Registry) *gin.Engine {
	r := gin.New()
	r.Use(s.recoverer, s.metrics.middleware)
	r.NoRoute(func(c *gin.Context) {
		s.writeProblem(c, &service.Error{Kind: errNotFoundRoute, Detail: "no such endpoint on a worker: " + c.Request.URL.Path})
	})
	r.GET("/healthz", s.healthz)
	r.GET("/readyz", s.readyz)
	r.GET("/metrics", gin.WrapH(promhttp.HandlerFor(reg, promhttp.HandlerOpts{Registry: reg})))
	return r
}

// OpsHandler is the handler of a worker-only replica: /healthz, /readyz and
// /metrics, no API routes.
func (s *Server) OpsHandler() http.Handler { return s.ops }
