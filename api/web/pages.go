package web

import "github.com/gin-gonic/gin"

// registerPages adds the signed-in pages, one line each (the handlers
// live in a file per page).
func (s *Site) registerPages(g *gin.RouterGroup) {
	// Drift and the membrane-potential calculator (webdrift).
	g.GET("/drift", s.driftList)
	g.GET("/assays/:id/drift", s.assayDrift)
	g.GET("/potential", s.potential)
}
