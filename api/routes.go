package api

import (
	"errors"
	"fmt"
	"net/http"
	"slices"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"

	"sluice/api/service"
)

// queryParams lists the query parameters each route takes, by method and
// route template; a route not listed takes none. Any other parameter is a
// 400 naming it (knownParams), so a misspelt filter never silently selects
// everything.
var queryParams = map[string][]string{
	"GET /v1/fits":                 {"assay_id", "compound_id", "from", "to", "limit", "cursor"},
	"POST /v1/plates":              {"format", "barcode", "assay_id", "measured_at", "conc_unit", "mode", "layout_id", "model", "resamples", "seed", "scheme", "interval", "wait"},
	"POST /v1/potential":           {"format"},
	"GET /v1/assays/:id/drift":     {"metric", "from", "to"},
	"GET /v1/assays/:id/drift.svg": {"metric", "from", "to"},
	// Potency histories.
	"GET /v1/compounds/:id/potency":     {"assay_id", "from", "to", "include", "msr_window"},
	"GET /v1/compounds/:id/potency.svg": {"assay_id", "from", "to", "msr_window"},
	"GET /v1/assays/:id/potency":        {"sort", "limit", "cursor", "msr_window", "format"},
	"GET /v1/plates":                    {"assay_id", "barcode", "from", "to", "limit", "cursor"},
}

// routes is the whole API surface; the OpenAPI document lists the same
// routes (a test checks).
func (s *Server) routes(reg *prometheus.Registry) *gin.Engine {
	r := gin.New()
	r.HandleMethodNotAllowed = true
	r.Use(s.recoverer, s.metrics.middleware, s.limitBody, s.knownParams, s.textParams)
	r.NoRoute(func(c *gin.Context) {
		if !apiPath(c.Request.URL.Path) {
			s.site.NotFound(c)
			return
		}
		s.writeProblem(c, &service.Error{Kind: errNotFoundRoute, Detail: "no such endpoint: " + c.Request.URL.Path})
	})
	r.NoMethod(func(c *gin.Context) {
		if !apiPath(c.Request.URL.Path) {
			s.site.MethodNotAllowed(c)
			return
		}
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
	read.GET("/layouts", s.listLayouts)
	read.GET("/layouts/:id", s.getLayout)
	read.GET("/plates/:id", s.getPlate)
	read.GET("/plates/:id/curves.csv", s.plateCurvesCSV)
	read.GET("/plates/:id/heatmap.svg", s.plateHeatmap)
	read.GET("/jobs/:id", s.getJob)
	read.GET("/schild/:id", s.getSchild)
	read.GET("/schild/:id/plot.svg", s.schildPlot)
	read.GET("/analyses/:id", s.getAnalysis)
	read.GET("/analyses/:id/result", s.getAnalysisResult)
	read.GET("/compounds/:id/potency", s.compoundPotency)
	read.GET("/compounds/:id/potency.svg", s.compoundPotencyPlot)
	read.GET("/assays/:id/potency", s.assayPotency)
	read.GET("/curves/:id", s.getCurve)
	read.GET("/curves/:id/plot.svg", s.curvePlot)
	read.GET("/msr-studies/:id", s.getMSRStudy)
	read.GET("/plates", s.listPlates)
	read.GET("/plates/:id/wells", s.plateWells)
	read.GET("/assays/:id/drift", s.getDrift)
	read.GET("/assays/:id/drift.svg", s.driftPlot)
	read.GET("/drift", s.listDrift)

	// Writes: each handler builds the request's service.Idem from its
	// Idempotency-Key (idemOf) and the use case does the rest.
	submit := r.Group("/v1", s.authenticate(ScopeSubmit))
	submit.POST("/fits", s.createFit)
	submit.POST("/assays", s.createAssay)
	submit.POST("/compounds", s.createCompound)
	submit.POST("/layouts", s.createLayout)
	submit.POST("/plates", s.createPlate)
	submit.POST("/schild", s.createSchild)
	submit.POST("/curves/:id/review", s.reviewCurve)
	submit.POST("/curves/:id/refit", s.refitCurve)
	submit.POST("/msr-studies", s.createMSRStudy)

	// Calculators: no record is stored, so scope read suffices.
	calc := r.Group("/v1", s.authenticate(ScopeRead))
	calc.POST("/potential", s.postPotential)
	calc.POST("/operational", s.postOperational)
	calc.POST("/qc/rules", s.postQCRules)

	admin := r.Group("/v1", s.authenticate(ScopeAdmin))
	admin.PUT("/assays/:id/baselines/:metric", s.putBaseline)

	// The dashboard: every path outside the API's.
	s.site.Register(r)
	return r
}

// apiPath reports whether a path is the API's (answered with problem+json)
// rather than the dashboard's (answered with pages).
func apiPath(p string) bool {
	return strings.HasPrefix(p, "/v1/") || p == "/v1" || p == "/healthz" || p == "/readyz" || p == "/metrics"
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

// knownParams refuses a query parameter the route does not take
// (queryParams), and one given more than once.
func (s *Server) knownParams(c *gin.Context) {
	if c.FullPath() == "" || !apiPath(c.FullPath()) {
		c.Next() // no such route (NoRoute or NoMethod answers), or a page
		return
	}
	allowed := queryParams[c.Request.Method+" "+c.FullPath()]
	var unknown, repeated []string
	for name, vs := range c.Request.URL.Query() {
		if !slices.Contains(allowed, name) {
			unknown = append(unknown, name)
		} else if len(vs) > 1 {
			repeated = append(repeated, name)
		}
	}
	if len(unknown) == 0 && len(repeated) > 0 {
		// Which one would count is a guess; every parameter takes one value.
		slices.Sort(repeated)
		n := len(c.Request.URL.Query()[repeated[0]])
		d := fmt.Sprintf("query parameter %q is given %d times; give it once", repeated[0], n)
		s.writeProblem(c, &service.Error{Kind: errBadRequest, Detail: d, Fields: []FieldError{{Parameter: repeated[0], Detail: d}}})
		return
	}
	if len(unknown) == 0 {
		c.Next()
		return
	}
	slices.Sort(unknown)
	takes := "takes no query parameters"
	if len(allowed) > 0 {
		takes = "takes only " + strings.Join(allowed, ", ")
	}
	e := &service.Error{Kind: errBadRequest, Detail: c.Request.Method + " " + c.FullPath() + " " + takes}
	for _, name := range unknown {
		e.Fields = append(e.Fields, FieldError{Parameter: name, Detail: "unknown parameter " + strconv.Quote(name)})
	}
	e.Detail = "unknown query parameter " + strconv.Quote(unknown[0]) + ": " + e.Detail
	s.writeProblem(c, e)
}

// MaxParamLen bounds a path or query parameter in bytes: IDs are at most a
// few hundred bytes and a cursor less.
const MaxParamLen = 1024

// textParams refuses a path or query parameter that is not valid text
// (service.ValidText: UTF-8 without control characters) or longer than
// MaxParamLen, with a 400 naming it, before any store sees it: PostgreSQL
// refuses such text where SQLite would look it up and find nothing, and
// the answer must not depend on the engine.
func (s *Server) textParams(c *gin.Context) {
	check := func(name, v string) bool {
		var d string
		switch {
		case len(v) > MaxParamLen:
			d = fmt.Sprintf("%s is longer than %d bytes", name, MaxParamLen)
		case !service.ValidText(v):
			d = name + " must be valid UTF-8 without control characters"
		default:
			return true
		}
		s.writeProblem(c, &service.Error{Kind: errBadRequest, Detail: d, Fields: []FieldError{{Parameter: name, Detail: d}}})
		return false
	}
	for _, p := range c.Params {
		if !check(p.Key, p.Value) {
			return
		}
	}
	for name, vs := range c.Request.URL.Query() {
		for _, v := range vs {
			if !check(name, v) {
				return
			}
		}
	}
	c.Next()
}
