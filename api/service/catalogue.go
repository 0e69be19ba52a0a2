package service

import (
	"context"
	"errors"
	"fmt"
	"net/http"
	"regexp"
	"time"

	"sluice/api/wire"
	"sluice/db"
)

// idPattern is what a caller-chosen ID may look like.
var idPattern = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._:-]{0,99}$`)

// ValidID reports whether id may name a caller-chosen record (assay,
// compound, layout).
func ValidID(id string) bool { return idPattern.MatchString(id) }

const maxTextField = 500

// checkEntry checks a catalogue entry; errors point at the field.
func checkEntry(e *wire.CatalogueEntry) error {
	if !ValidID(e.ID) {
		return Invalid("/id", "id %q must be 1–100 letters, digits or ._:- starting with a letter or digit", e.ID)
	}
	if e.Name == "" || len(e.Name) > maxTextField {
		return Invalid("/name", "name is required, at most %d bytes", maxTextField)
	}
	for _, f := range []struct{ ptr, v string }{{"/name", e.Name}, {"/target", e.Target}, {"/readout", e.Readout}, {"/units", e.Units}} {
		if len(f.v) > maxTextField {
			return Invalid(f.ptr, "at most %d bytes", maxTextField)
		}
		if err := checkText(f.ptr, f.v); err != nil {
			return err
		}
	}
	if e.CreatedAt != "" || e.CreatedBy != "" {
		return Invalid("/created_at", "created_at and created_by are set by the server")
	}
	if e.ReferenceCompoundID != "" && !ValidID(e.ReferenceCompoundID) {
		return Invalid("/reference_compound_id", "reference_compound_id %q must be 1–100 letters, digits or ._:- starting with a letter or digit", e.ReferenceCompoundID)
	}
	return nil
}

// CreateAssay is POST /v1/assays.
func (s *Service) CreateAssay(ctx context.Context, who Caller, idem *Idem, e wire.CatalogueEntry) (*Reply, error) {
	return s.createEntry(ctx, who, idem, "assay", e)
}

// CreateCompound is POST /v1/compounds.
func (s *Service) CreateCompound(ctx context.Context, who Caller, idem *Idem, e wire.CatalogueEntry) (*Reply, error) {
	return s.createEntry(ctx, who, idem, "compound", e)
}

func (s *Service) createEntry(ctx context.Context, who Caller, idem *Idem, kind string, e wire.CatalogueEntry) (*Reply, error) {
	return s.write(ctx, who, idem, func(context.Context) (plan, error) {
		if err := checkEntry(&e); err != nil {
			return plan{}, err
		}
		if kind != "assay" && e.ReferenceCompoundID != "" {
			return plan{}, Invalid("/reference_compound_id", "only an assay names a reference compound")
		}
		now := s.now()
		e.CreatedAt, e.CreatedBy = now.Format(time.RFC3339Nano), who.Name
		reply, err := jsonReply(http.StatusCreated, e, fmt.Sprintf("/v1/%ss/%s", kind, e.ID))
		if err != nil {
			return plan{}, err
		}
		return plan{commit: func(ctx context.Context, w db.Writer) (*Reply, error) {
			var err error
			if kind == "assay" {
				err = w.InsertAssay(ctx, &db.Assay{ID: e.ID, Name: e.Name, Target: e.Target, Readout: e.Readout, Units: e.Units,
					ReferenceCompoundID: e.ReferenceCompoundID, CreatedAt: now, CreatedBy: who.Name})
			} else {
				err = w.InsertCompound(ctx, &db.Compound{ID: e.ID, Name: e.Name, Target: e.Target, Readout: e.Readout, Units: e.Units, CreatedAt: now, CreatedBy: who.Name})
			}
			if errors.Is(err, db.ErrReference) {
				return nil, Invalid("/reference_compound_id", "no compound %q: register the reference compound first", e.ReferenceCompoundID)
			}
			if err != nil {
				return nil, fmt.Errorf("%s %q: %w", kind, e.ID, err)
			}
			if err := w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: who.Name, Action: kind + ".create", Target: e.ID}); err != nil {
				return nil, fmt.Errorf("audit %s %q: %w", kind, e.ID, err)
			}
			return reply, nil
		}}, nil
	})
}

func assayEntry(a db.Assay) wire.CatalogueEntry {
	return wire.CatalogueEntry{ID: a.ID, Name: a.Name, Target: a.Target, Readout: a.Readout, Units: a.Units,
		ReferenceCompoundID: a.ReferenceCompoundID, CreatedAt: a.CreatedAt.Format(time.RFC3339Nano), CreatedBy: a.CreatedBy}
}

func compoundEntry(c db.Compound) wire.CatalogueEntry {
	return wire.CatalogueEntry{ID: c.ID, Name: c.Name, Target: c.Target, Readout: c.Readout, Units: c.Units,
		CreatedAt: c.CreatedAt.Format(time.RFC3339Nano), CreatedBy: c.CreatedBy}
}

// Assay is GET /v1/assays/{id}.
func (s *Service) Assay(ctx context.Context, id string) (*wire.CatalogueEntry, error) {
	a, err := s.store.Assay(ctx, id)
	if err != nil {
		return nil, err
	}
	e := assayEntry(*a)
	return &e, nil
}

// Compound is GET /v1/compounds/{id}.
func (s *Service) Compound(ctx context.Context, id string) (*wire.CatalogueEntry, error) {
	c, err := s.store.Compound(ctx, id)
	if err != nil {
		return nil, err
	}
	e := compoundEntry(*c)
	return &e, nil
}

// Assays is GET /v1/assays.
func (s *Service) Assays(ctx context.Context) ([]wire.CatalogueEntry, error) {
	as, err := s.store.Assays(ctx)
	if err != nil {
		return nil, err
	}
	out := make([]wire.CatalogueEntry, len(as))
	for i, a := range as {
		out[i] = assayEntry(a)
	}
	return out, nil
}

// Compounds is GET /v1/compounds.
func (s *Service) Compounds(ctx context.Context) ([]wire.CatalogueEntry, error) {
	cs, err := s.store.Compounds(ctx)
	if err != nil {
		return nil, err
	}
	out := make([]wire.CatalogueEntry, len(cs))
	for i, c := range cs {
		out[i] = compoundEntry(c)
	}
	return out, nil
}
