package api

import (
	"net/http"
	"strconv"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/wire"
	"sluice/db"
)

// createFit is POST /v1/fits: fit one curve, and store it unless told not to.
func (s *Server) createFit(c *gin.Context) {
	var req wire.FitRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	idem, err := idemOf(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := s.svc.Fit(c.Request.Context(), callerOf(c), idem, &req, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}

// getFit is GET /v1/fits/{id}: the stored result, as it was returned.
func (s *Server) getFit(c *gin.Context) {
	run, err := s.svc.FitRun(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Data(http.StatusOK, "application/json", run.Result)
}

// listFits is GET /v1/fits?assay_id=&compound_id=&from=&to=&limit=&cursor=.
func (s *Server) listFits(c *gin.Context) {
	f := db.FitFilter{AssayID: c.Query("assay_id"), CompoundID: c.Query("compound_id"), Cursor: c.Query("cursor")}
	for _, tp := range []struct {
		name string
		dst  *time.Time
	}{{"from", &f.From}, {"to", &f.To}} {
		if v := c.Query(tp.name); v != "" {
			t, err := time.Parse(time.RFC3339Nano, v)
			if err != nil {
				s.writeProblem(c, badParameter(tp.name, "%q is not an RFC 3339 time (e.g. 2026-11-03T09:30:00Z)", v))
				return
			}
			*tp.dst = t
		}
	}
	if v := c.Query("limit"); v != "" {
		n, err := strconv.Atoi(v)
		if err != nil || n < 1 || n > db.MaxListLimit {
			s.writeProblem(c, badParameter("limit", "%q is not a whole number from 1 to %d", v, db.MaxListLimit))
			return
		}
		f.Limit = n
	}
	out, err := s.svc.Fits(c.Request.Context(), f)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, out)
}
