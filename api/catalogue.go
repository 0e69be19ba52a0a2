package api

import (
	"encoding/json"
	"fmt"
	"net/http"
	"regexp"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/db"
)

// CatalogueEntry is an assay or a compound on the wire.
type CatalogueEntry struct {
	ID        string `json:"id"`
	Name      string `json:"name"`
	Target    string `json:"target,omitempty"`
	Readout   string `json:"readout,omitempty"`
	Units     string `json:"units,omitempty"`
	CreatedAt string `json:"created_at,omitempty"`
	CreatedBy string `json:"created_by,omitempty"`
}

// idPattern is what a caller-chosen ID may look like.
var idPattern = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._:-]{0,99}$`)

const maxTextField = 500

// readEntry decodes and checks a catalogue entry.
func (s *Server) readEntry(c *gin.Context) (*CatalogueEntry, error) {
	var e CatalogueEntry
	if err := requireJSON(c); err != nil {
		return nil, err
	}
	body, err := readBody(c)
	if err != nil {
		return nil, err
	}
	if err := decodeJSON(body, &e); err != nil {
		return nil, err
	}
	if !idPattern.MatchString(e.ID) {
		return nil, invalidField("/id", "id %q must be 1–100 letters, digits or ._:- starting with a letter or digit", e.ID)
	}
	if e.Name == "" || len(e.Name) > maxTextField {
		return nil, invalidField("/name", "name is required, at most %d bytes", maxTextField)
	}
	for ptr, v := range map[string]string{"/target": e.Target, "/readout": e.Readout, "/units": e.Units} {
		if len(v) > maxTextField {
			return nil, invalidField(ptr, "at most %d bytes", maxTextField)
		}
	}
	if e.CreatedAt != "" || e.CreatedBy != "" {
		return nil, invalidField("/created_at", "created_at and created_by are set by the server")
	}
	return &e, nil
}

func (s *Server) createAssay(c *gin.Context) { s.createEntry(c, "assay") }

func (s *Server) createCompound(c *gin.Context) { s.createEntry(c, "compound") }

func (s *Server) createEntry(c *gin.Context, kind string) {
	e, err := s.readEntry(c)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	now := s.now()
	e.CreatedAt, e.CreatedBy = now.Format(time.RFC3339Nano), actor(c)
	body, _ := json.Marshal(e)
	ctx := c.Request.Context()
	c.Header("Location", fmt.Sprintf("/v1/%ss/%s", kind, e.ID))
	s.respond(c, http.StatusCreated, "application/json", body, func(w db.Writer) error {
		var err error
		if kind == "assay" {
			err = w.InsertAssay(ctx, &db.Assay{ID: e.ID, Name: e.Name, Target: e.Target, Readout: e.Readout, Units: e.Units, CreatedAt: now, CreatedBy: e.CreatedBy})
		} else {
			err = w.InsertCompound(ctx, &db.Compound{ID: e.ID, Name: e.Name, Target: e.Target, Readout: e.Readout, Units: e.Units, CreatedAt: now, CreatedBy: e.CreatedBy})
		}
		if err != nil {
			return fmt.Errorf("%s %q: %w", kind, e.ID, err)
		}
		return w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: e.CreatedBy, Action: kind + ".create", Target: e.ID})
	})
}

func assayEntry(a db.Assay) CatalogueEntry {
	return CatalogueEntry{ID: a.ID, Name: a.Name, Target: a.Target, Readout: a.Readout, Units: a.Units,
		CreatedAt: a.CreatedAt.Format(time.RFC3339Nano), CreatedBy: a.CreatedBy}
}

func compoundEntry(a db.Compound) CatalogueEntry {
	return CatalogueEntry{ID: a.ID, Name: a.Name, Target: a.Target, Readout: a.Readout, Units: a.Units,
		CreatedAt: a.CreatedAt.Format(time.RFC3339Nano), CreatedBy: a.CreatedBy}
}

func (s *Server) getAssay(c *gin.Context) {
	a, err := s.store.Assay(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, assayEntry(*a))
}

func (s *Server) getCompound(c *gin.Context) {
	a, err := s.store.Compound(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, compoundEntry(*a))
}

func (s *Server) listAssays(c *gin.Context) {
	as, err := s.store.Assays(c.Request.Context())
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	out := make([]CatalogueEntry, len(as))
	for i, a := range as {
		out[i] = assayEntry(a)
	}
	c.JSON(http.StatusOK, gin.H{"assays": out})
}

func (s *Server) listCompounds(c *gin.Context) {
	cs, err := s.store.Compounds(c.Request.Context())
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	out := make([]CatalogueEntry, len(cs))
	for i, a := range cs {
		out[i] = compoundEntry(a)
	}
	c.JSON(http.StatusOK, gin.H{"compounds": out})
}
