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

// readyz says the database answers within a second.
func (s *Server) readyz(c *gin.Context) {
	ctx, cancel := context.WithTimeout(c.Request.Context(), time.Second)
	defer cancel()
	if err := s.store.Ping(ctx); err != nil {
		s.log.Warn("not ready", "err", err)
		s.writeProblem(c, &service.Error{Kind: errUnavailable, Detail: "the " + s.store.Engine() + " database does not answer"})
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
