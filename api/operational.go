package api

import (
	"github.com/gin-gonic/gin"
)

// postOperational is POST /v1/operational: τ and KA of a partial agonist
// against a full-agonist reference.
func (s *Server) postOperational(c *gin.Context) { handleJSONWrite(s, c, s.svc.Operational) }
