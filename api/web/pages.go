package web

import (
	"github.com/gin-gonic/gin"

	"sluice/api/service"
)

// registerPages adds the signed-in pages, one line each (the handlers
// live in a file per page).
func (s *Site) registerPages(g *gin.RouterGroup) {
	// Drift and the membrane-potential calculator (webdrift).
	g.GET("/drift", s.driftList)
	g.GET("/assays/:id/drift", s.assayDrift)
	g.GET("/potential", s.potential)
	// Curves and compounds (curve.go, compounds.go, compound.go).
	g.GET("/curves/:id", s.curvePage)
	g.GET("/curves/:id/plot.svg", s.curvePlot)
	g.POST("/curves/:id/review", s.csrf, s.requireScope(service.ScopeSubmit), s.curveReview)
	g.POST("/curves/:id/refit", s.csrf, s.requireScope(service.ScopeSubmit), s.curveRefit)
	g.GET("/compounds", s.compoundsPage)
	g.GET("/compounds/:id", s.compoundPage)
	g.GET("/compounds/:id/history.svg", s.compoundHistoryPlot)
	// Plates and Schild analyses (plates.go, plate.go, schild.go).
	g.GET("/plates", s.plates)
	g.GET("/plates/:id", s.plate)
	g.GET("/plates/:id/wells.csv", s.plateWellsCSV)
	g.GET("/plates/:id/curves.csv", s.plateCurvesCSV)
	g.GET("/plates/:id/curves/:curve/plot.svg", s.plateCurvePlot)
	g.GET("/schild/:id", s.schildPage)
	// End of plates and Schild analyses.
}
