package api

import (
	"net/http"

	"github.com/gin-gonic/gin"
)

// getAnalysis is GET /v1/analyses/{id}: a single analysis queued because
// it was over the synchronous budget, with its result once done.
func (s *Server) getAnalysis(c *gin.Context) {
	v, err := s.svc.Analysis(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}

// getAnalysisResult is GET /v1/analyses/{id}/result: the finished
// analysis' reply, byte for byte.
func (s *Server) getAnalysisResult(c *gin.Context) {
	r, err := s.svc.AnalysisResult(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}
