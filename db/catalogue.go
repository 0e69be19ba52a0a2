package db

import "context"

const catalogueCols = "id, name, target, readout, units, created_at, created_by"

// assayCols are an assay's columns: the catalogue's and its reference
// compound.
const assayCols = catalogueCols + ", reference_compound_id"

func (w *sqlWriter) InsertAssay(ctx context.Context, a *Assay) error {
	return w.insert(ctx, "InsertAssay", a.ID, "INSERT INTO assays ("+assayCols+") VALUES ($1, $2, $3, $4, $5, $6, $7, $8)",
		a.ID, a.Name, a.Target, a.Readout, a.Units, w.e.timeArg(a.CreatedAt), a.CreatedBy, nullString(a.ReferenceCompoundID))
}

func (w *sqlWriter) InsertCompound(ctx context.Context, c *Compound) error {
	return w.insert(ctx, "InsertCompound", c.ID, "INSERT INTO compounds ("+catalogueCols+") VALUES ($1, $2, $3, $4, $5, $6, $7)",
		c.ID, c.Name, c.Target, c.Readout, c.Units, w.e.timeArg(c.CreatedAt), c.CreatedBy)
}

func (s *sqlStore) Assay(ctx context.Context, id string) (*Assay, error) {
	var a Assay
	var t dbTime
	var ref *string
	err := s.e.queryRow(ctx, "SELECT "+assayCols+" FROM assays WHERE id = $1", id).
		Scan(&a.ID, &a.Name, &a.Target, &a.Readout, &a.Units, &t, &a.CreatedBy, &ref)
	if err != nil {
		return nil, s.read("Assay", id, err)
	}
	a.CreatedAt, a.ReferenceCompoundID = t.t, deref(ref)
	return &a, nil
}

func (s *sqlStore) Compound(ctx context.Context, id string) (*Compound, error) {
	var c Compound
	var t dbTime
	err := s.e.queryRow(ctx, "SELECT "+catalogueCols+" FROM compounds WHERE id = $1", id).
		Scan(&c.ID, &c.Name, &c.Target, &c.Readout, &c.Units, &t, &c.CreatedBy)
	if err != nil {
		return nil, s.read("Compound", id, err)
	}
	c.CreatedAt = t.t
	return &c, nil
}

func (s *sqlStore) Assays(ctx context.Context) ([]Assay, error) {
	rows, err := s.e.query(ctx, "SELECT "+assayCols+" FROM assays ORDER BY id")
	if err != nil {
		return nil, s.read("Assays", "", err)
	}
	defer rows.Close()
	var out []Assay
	for rows.Next() {
		var a Assay
		var t dbTime
		var ref *string
		if err := rows.Scan(&a.ID, &a.Name, &a.Target, &a.Readout, &a.Units, &t, &a.CreatedBy, &ref); err != nil {
			return nil, s.read("Assays", "", err)
		}
		a.CreatedAt, a.ReferenceCompoundID = t.t, deref(ref)
		out = append(out, a)
	}
	return out, s.read("Assays", "", rows.Err())
}

func (s *sqlStore) Compounds(ctx context.Context) ([]Compound, error) {
	rows, err := s.e.query(ctx, "SELECT "+catalogueCols+" FROM compounds ORDER BY id")
	if err != nil {
		return nil, s.read("Compounds", "", err)
	}
	defer rows.Close()
	var out []Compound
	for rows.Next() {
		var c Compound
		var t dbTime
		if err := rows.Scan(&c.ID, &c.Name, &c.Target, &c.Readout, &c.Units, &t, &c.CreatedBy); err != nil {
			return nil, s.read("Compounds", "", err)
		}
		c.CreatedAt = t.t
		out = append(out, c)
	}
	return out, s.read("Compounds", "", rows.Err())
}
