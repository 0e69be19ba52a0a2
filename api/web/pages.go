package web

import "github.com/gin-gonic/gin"

// registerPages adds the signed-in pages, one line each (the handlers
// live in a file per page).
func (s *Site) registerPages(g *gin.RouterGroup) {
}
