package api

import (
	"fmt"
	"net/http"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/service"
)

// plateCurvesCSV is GET /v1/plates/{id}/curves.csv: one row per curve.
func (s *Server) plateCurvesCSV(c *gin.Context) {
	p, curves, err := s.svc.PlateCurves(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Header("Content-Type", "text/csv; charset=utf-8")
	c.Header("Content-Disposition", fmt.Sprintf(`attachment; filename="%s"`, service.CSVName(p.Barcode, "curves")))
	c.Status(http.StatusOK)
	if err := service.WritePlateCurvesCSV(c.Writer, p, curves); err != nil {
		s.log.Warn("curves.csv", "plate", p.ID, "err", err)
	}
}

// plateHeatmap is GET /v1/plates/{id}/heatmap.svg: raw values by well, the
// controls outlined, the QC verdict in the title.
func (s *Server) plateHeatmap(c *gin.Context) {
	m, err := s.svc.PlateMap(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	s.writeSVG(c, figure.Heatmap(m))
}
