package api

import (
	"sluice/api/service"

	"context"
	"net/http"
	"time"

	"github.com/gin-gonic/gin"
)

// healthz says the process serves; it checks nothing else.
func (s *Server) healthz(c *gin.Context) {
	c.JSON(http.StatusOK, gin.H{"status": "ok"})
}

// readyz says the database answers within a second.
func (s *Server) readyz(c *gin.Context) {
	ctx, cancel := context.WithTimeout(c.Request.Context(), time.Second)
	defer cancel()
	if err := s.store.Ping(ctx); err != nil {
		s.log.Warn("not ready", "err", err)
		s.writeProblem(c, &service.Error{Kind: errUnavailable, Detail: "the " + s.store.Engine() + " database does not answer"})
		return
	}
	c.JSON(http.StatusOK, gin.H{"status": "ready", "database": s.store.Engine()})
}
