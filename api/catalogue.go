package api

import (
	"context"

	"net/http"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/api/wire"
)

func (s *Server) createAssay(c *gin.Context) { s.createEntry(c, s.svc.CreateAssay) }

func (s *Server) createCompound(c *gin.Context) { s.createEntry(c, s.svc.CreateCompound) }

// createEntry is POST /v1/assays and /v1/compounds.
func (s *Server) createEntry(c *gin.Context, create func(ctx context.Context, who service.Caller, idem *service.Idem, e wire.CatalogueEntry) (*service.Reply, error)) {
	var e wire.CatalogueEntry
	body, ok := s.readJSON(c, &e)
	if !ok {
		return
	}
	idem, err := idemOf(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	r, err := create(c.Request.Context(), callerOf(c), idem, e)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	writeReply(c, r)
}

func (s *Server) getAssay(c *gin.Context) {
	e, err := s.svc.Assay(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, e)
}

func (s *Server) getCompound(c *gin.Context) {
	e, err := s.svc.Compound(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, e)
}

func (s *Server) listAssays(c *gin.Context) {
	es, err := s.svc.Assays(c.Request.Context())
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, gin.H{"assays": es})
}

func (s *Server) listCompounds(c *gin.Context) {
	es, err := s.svc.Compounds(c.Request.Context())
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, gin.H{"compounds": es})
}
