package web

import "github.com/gin-gonic/gin"

// registerPages adds the signed-in pages, one line each (the handlers
// live in a file per page).
func (s *Site) registerPages(g *gin.RouterGroup) {
	// Drift and the membrane-potential calculator (webdrift).
	g.GET("/drift", s.driftList)
	g.GET("/assays/:id/drift", s.assayDrift)
	g.GET("/potential", s.potential)
	// Plates and Schild analyses (plates.go, plate.go, schild.go).
	g.GET("/plates", s.plates)
	g.GET("/plates/:id", s.plate)
	g.GET("/plates/:id/wells.csv", s.plateWellsCSV)
	g.GET("/plates/:id/curves.csv", s.plateCurvesCSV)
	g.GET("/plates/:id/curves/:curve/plot.svg", s.plateCurvePlot)
	g.GET("/schild/:id", s.schildPage)
	// End of plates and Schild analyses.
}
