package api

import (
	"github.com/gin-gonic/gin"

	"sluice/api/figure"
)

// curvePlot is GET /v1/curves/{id}/plot.svg: a stored curve of either
// kind drawn as a single fit's plot is, with the points its refits left
// out drawn hollow.
func (s *Server) curvePlot(c *gin.Context) {
	d, err := s.svc.CurveData(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	s.writeSVG(c, figure.StoredCurve(d))
}
