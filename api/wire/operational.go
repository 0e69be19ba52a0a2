package wire

// OperationalRequest is the body of POST /v1/operational: a full agonist's
// curve (the reference, which fixes the system maximum Em) and a partial
// agonist's curve on the same assay, concentrations in conc_unit.
type OperationalRequest struct {
	ConcUnit   string    `json:"conc_unit,omitempty"`
	Reference  []PointIn `json:"reference"`
	Partial    []PointIn `json:"partial"`
	Confidence float64   `json:"confidence,omitempty"`
}

// OperationalResponse gives τ and KA of the partial agonist.
type OperationalResponse struct {
	Em       float64   `json:"em"`
	Tau      *Estimate `json:"tau"`
	LogTau   *Estimate `json:"log_tau"`
	KA       *Estimate `json:"ka"`
	PKA      float64   `json:"pka"`
	Slope    *Estimate `json:"slope"`
	EC50     float64   `json:"ec50"`
	Emax     float64   `json:"emax"`
	Caution  string    `json:"caution"`
	Approach string    `json:"approach"`
}
