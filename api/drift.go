package api

import (
	"net/http"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/wire"
)

// timeParams reads the optional RFC 3339 query parameters named.
func timeParams(c *gin.Context, names ...string) ([]time.Time, error) {
	out := make([]time.Time, len(names))
	for i, name := range names {
		if v := c.Query(name); v != "" {
			t, err := time.Parse(time.RFC3339Nano, v)
			if err != nil {
				return nil, badParameter(name, "%q is not an RFC 3339 time (e.g. 2026-11-03T09:30:00Z)", v)
			}
			out[i] = t
		}
	}
	return out, nil
}

// getDrift is GET /v1/assays/{id}/drift?metric=&from=&to=: one control
// chart of an assay.
func (s *Server) getDrift(c *gin.Context) {
	ts, err := timeParams(c, "from", "to")
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	metric := c.Query("metric")
	if metric == "" {
		s.writeProblem(c, badParameter("metric", "metric is required"))
		return
	}
	ch, err := s.svc.DriftChart(c.Request.Context(), c.Param("id"), metric, ts[0], ts[1])
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, ch)
}

// listDrift is GET /v1/drift: every charted assay and metric with its
// status and latest violation.
func (s *Server) listDrift(c *gin.Context) {
	o, err := s.svc.DriftOverview(c.Request.Context())
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, o)
}

// putBaseline is PUT /v1/assays/{id}/baselines/{metric} (admin).
func (s *Server) putBaseline(c *gin.Context) {
	var req wire.BaselineRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	// The path names what is changed: it is part of the request's hash.
	idem, err := idemOf(c, body, "id", c.Param("id"), "metric", c.Param("metric"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := s.svc.PutBaseline(c.Request.Context(), callerOf(c), idem, c.Param("id"), c.Param("metric"), &req)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}

// postQCRules is POST /v1/qc/rules: the drift rules on a series the
// caller sends.
func (s *Server) postQCRules(c *gin.Context) { handleJSONWrite(s, c, s.svc.QCRules) }

// driftPlot is GET /v1/assays/{id}/drift.svg?metric=&from=&to=: the chart
// as a Levey–Jennings figure with an EWMA panel (api/plot).
func (s *Server) driftPlot(c *gin.Context) {
	ts, err := timeParams(c, "from", "to")
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	metric := c.Query("metric")
	if metric == "" {
		s.writeProblem(c, badParameter("metric", "metric is required"))
		return
	}
	ch, err := s.svc.DriftChart(c.Request.Context(), c.Param("id"), metric, ts[0], ts[1])
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	s.writeSVG(c, figure.Drift(ch))
}
