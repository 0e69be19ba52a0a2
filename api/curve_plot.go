package api

import (
	"github.com/gin-gonic/gin"

	"sluice/api/figure"
)

// curvePlot is GET /v1/curves/{id}/plot.svg: a stored curve of either
// kind drawn as a single fit's plot is.
func (s *Server) curvePlot(c *gin.Context) {
	d, err := s.svc.CurveData(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	conc := make([]float64, len(d.Points))
	resp := make([]float64, len(d.Points))
	for i, p := range d.Points {
		conc[i], resp[i] = p.Conc, p.Response
	}
	s.writeSVG(c, figure.Curve("Curve "+d.ID, &d.Result, conc, resp))
}
