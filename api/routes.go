package api

import (
	"sluice/api/service"

	"errors"
	"net/http"
	"strconv"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"
)

// routes is the whole API surface; the OpenAPI document lists the same
// routes (a test checks).
func (s *Server) routes(reg *prometheus.Registry) *gin.Engine {
	r := gin.New()
	r.HandleMethodNotAllowed = true
	r.Use(s.recoverer, s.metrics.middleware, s.limitBody)
	r.NoRoute(func(c *gin.Context) {
		s.writeProblem(c, &service.Error{Kind: errNotFoundRoute, Detail: "no such endpoint: " + c.Request.URL.Path})
	})
	r.NoMethod(func(c *gin.Context) {
		s.writeProblem(c, &service.Error{Kind: errMethod, Detail: c.Request.Method + " is not allowed on " + c.Request.URL.Path})
	})

	r.GET("/healthz", s.healthz)
	r.GET("/readyz", s.readyz)
	r.GET("/metrics", gin.WrapH(promhttp.HandlerFor(reg, promhttp.HandlerOpts{Registry: reg})))
	r.GET("/v1/openapi.json", s.openAPI())

	read := r.Group("/v1", s.authenticate(ScopeRead))
	read.GET("/fits", s.listFits)
	read.GET("/fits/:id", s.getFit)
	read.GET("/fits/:id/plot.svg", s.fitPlot)
	read.GET("/assays", s.listAssays)
	read.GET("/assays/:id", s.getAssay)
	read.GET("/compounds", s.listCompounds)
	read.GET("/compounds/:id", s.getCompound)
	read.GET("/plates/:id", s.getPlate)
	read.GET("/plates/:id/curves.csv", s.plateCurvesCSV)
	read.GET("/plates/:id/heatmap.svg", s.plateHeatmap)
	read.GET("/jobs/:id", s.getJob)
	read.GET("/schild/:id", s.getSchild)
	read.GET("/schild/:id/plot.svg", s.schildPlot)

	// Writes: the use cases handle the Idempotency-Key (service.NewIdem);
	// s.idempotency does it for the handlers that still store themselves.
	submit := r.Group("/v1", s.authenticate(ScopeSubmit))
	submit.POST("/fits", s.createFit)
	submit.POST("/assays", s.createAssay)
	submit.POST("/compounds", s.createCompound)
	submit.POST("/layouts", s.idempotency, s.createLayout)
	submit.POST("/plates", s.idempotency, s.createPlate)
	submit.POST("/schild", s.createSchild)

	// Calculators: no record is stored, so scope read suffices.
	calc := r.Group("/v1", s.authenticate(ScopeRead))
	calc.POST("/potential", s.idempotency, s.postPotential)
	calc.POST("/operational", s.postOperational)
	return r
}

// recoverer turns a panic into a 500 problem (logged) instead of a dropped
// connection.
func (s *Server) recoverer(c *gin.Context) {
	defer func() {
		if v := recover(); v != nil {
			if v == http.ErrAbortHandler {
				panic(v)
			}
			s.log.Error("panic", "path", c.Request.URL.Path, "panic", v)
			s.writeProblem(c, errors.New("panic"))
		}
	}()
	c.Next()
}

// limitBody caps every request body (http.MaxBytesReader); reading past
// the cap fails with a 413 problem.
func (s *Server) limitBody(c *gin.Context) {
	if c.Request.ContentLength > s.cfg.BodyLimit {
		s.writeProblem(c, &service.Error{Kind: errTooLarge, Detail: "the body is larger than the limit of " +
			strconv.FormatInt(s.cfg.BodyLimit, 10) + " bytes"})
		return
	}
	c.Request.Body = http.MaxBytesReader(c.Writer, c.Request.Body, s.cfg.BodyLimit)
	c.Next()
}
