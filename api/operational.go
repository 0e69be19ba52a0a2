package api

import (
	"github.com/gin-gonic/gin"

	"sluice/api/wire"
)

// postOperational is POST /v1/operational: τ and KA of a partial agonist
// against a full-agonist reference.
func (s *Server) postOperational(c *gin.Context) {
	var req wire.OperationalRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	idem, err := idemOf(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := s.svc.Operational(c.Request.Context(), callerOf(c), idem, &req)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}
