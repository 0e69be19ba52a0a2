package wire

// CatalogueEntry is an assay or a compound on the wire.
type CatalogueEntry struct {
	ID      string `json:"id"`
	Name    string `json:"name"`
	Target  string `json:"target,omitempty"`
	Readout string `json:"readout,omitempty"`
	Units   string `json:"units,omitempty"`
	// ReferenceCompoundID names an assay's reference compound, whose pEC50
	// on each plate is charted for drift (assays only).
	ReferenceCompoundID string `json:"reference_compound_id,omitempty"`
	CreatedAt           string `json:"created_at,omitempty"`
	CreatedBy           string `json:"created_by,omitempty"`
}
