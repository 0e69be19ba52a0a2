package api

import (
	"net/http"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/wire"
)

// createSchild is POST /v1/schild.
func (s *Server) createSchild(c *gin.Context) {
	var req wire.SchildRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	idem, err := idemOf(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := s.svc.CreateSchild(c.Request.Context(), callerOf(c), idem, &req, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}

func (s *Server) getSchild(c *gin.Context) {
	r, err := s.svc.SchildRun(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Data(http.StatusOK, "application/json", r.Result)
}

// schildPlot is GET /v1/schild/{id}/plot.svg: the shifted curves on the
// left, the Schild plot on the right.
func (s *Server) schildPlot(c *gin.Context) {
	st, err := s.svc.StoredSchild(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	s.writeSVG(c, figure.Schild(st))
}
