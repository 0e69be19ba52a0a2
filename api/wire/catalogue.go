package wire

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
