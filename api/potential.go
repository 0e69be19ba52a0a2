package api

import (
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/wire"
)

// postPotential is POST /v1/potential; with ?format=svg or Accept:
// image/svg+xml it answers with the plot of V and ΔV instead.
func (s *Server) postPotential(c *gin.Context) {
	var req wire.PotentialRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	svg := c.Query("format") == "svg" || strings.Contains(c.GetHeader("Accept"), "image/svg+xml")
	reply := "json"
	if svg {
		reply = "svg"
	}
	idem, err := idemOf(c, body, "reply", reply)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := s.svc.Potential(c.Request.Context(), callerOf(c), idem, &req, svg)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}
