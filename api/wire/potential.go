package wire

// PotentialRequest is the body of POST /v1/potential. Ion concentrations
// are mM, agonist concentrations in conc_unit, conductances nS (channels
// pS).
type PotentialRequest struct {
	// ConcUnit is the unit of agonist_conc (M, mM, uM or µM, nM, pM);
	// required: Sluice does not guess whether a number is molar.
	ConcUnit string `json:"conc_unit,omitempty"`
	// CurveID names a stored fit; or Hill gives the curve directly.
	CurveID string  `json:"curve_id,omitempty"`
	Hill    *HillIn `json:"hill,omitempty"`
	// AgonistID names the agonist in the figure's title; by default the
	// stored fit's compound, else the Hill curve's EC50 and slope.
	AgonistID string `json:"agonist_id,omitempty"`
	// PoMax is the open probability at the fitted maximum, for CurveID
	// (Hill carries its own); default 1.
	PoMax *float64 `json:"po_max,omitempty"`
	// AgonistConc holds pointers so that a null element is seen (and
	// refused) instead of read as 0 M.
	AgonistConc []*float64 `json:"agonist_conc"`
	Channel     ChannelIn  `json:"channel"`
	Cell        CellIn     `json:"cell"`
	ThresholdMV *float64   `json:"threshold_mv,omitempty"`
}

// HillIn is a Hill curve for the open fraction.
type HillIn struct {
	LogEC50 *float64 `json:"log_ec50"`
	Hill    *float64 `json:"hill"`
	PoMax   *float64 `json:"po_max"`
}

// ChannelIn is the ligand-gated channel.
type ChannelIn struct {
	// Name names the channel in the figure's title (e.g. "GluN1/GluN2A");
	// by default its count and conductance.
	Name          string             `json:"name,omitempty"`
	Count         float64            `json:"count"`
	ConductancePS float64            `json:"conductance_ps"`
	ReversalMV    *float64           `json:"reversal_mv,omitempty"`
	Permeability  map[string]float64 `json:"permeability,omitempty"`
	// MgMM is extracellular Mg²⁺ in mM for an NMDA-type block; 0 or
	// absent means none.
	MgMM float64 `json:"mg_mm,omitempty"`
}

// CellIn is the cell: a preset ("neuron" or "muscle") whose values the
// other fields override, or every field.
type CellIn struct {
	Preset               string             `json:"preset,omitempty"`
	TemperatureC         *float64           `json:"temperature_c,omitempty"`
	Ions                 map[string]IonIn   `json:"ions,omitempty"`
	RestingConductanceNS map[string]float64 `json:"resting_conductance_ns,omitempty"`
}

// IonIn is one ion's concentrations in mM.
type IonIn struct {
	Out float64 `json:"out"`
	In  float64 `json:"in"`
}

// PotentialResponse is the answer of POST /v1/potential. Its
// concentrations (points[].agonist_conc, threshold_crossed_at) are molar,
// whatever the request's unit, as every result of Sluice is; ConcUnit
// says so ("M").
type PotentialResponse struct {
	ConcUnit          string             `json:"conc_unit"`
	RestMV            float64            `json:"rest_mv"`
	NernstMV          map[string]float64 `json:"nernst_mv"`
	ChannelReversalMV float64            `json:"channel_reversal_mv"`
	Points            []PotentialPoint   `json:"points"`
	ThresholdCrossed  *float64           `json:"threshold_crossed_at,omitempty"`
	Multistable       bool               `json:"multistable"`
	// Flags are machine-readable warnings (implausible_concentration);
	// Notes explain them in sentences. Both are [] when there is none.
	Flags    []string `json:"flags"`
	Notes    []string `json:"notes"`
	Cautions []string `json:"cautions"`
}

// PotentialPoint is the prediction at one agonist concentration.
type PotentialPoint struct {
	AgonistConc  float64      `json:"agonist_conc"`
	OpenFraction float64      `json:"open_fraction"`
	GLigandNS    float64      `json:"g_ligand_ns"`
	MgUnblocked  *float64     `json:"mg_unblocked,omitempty"`
	VMV          float64      `json:"v_mv"`
	DeltaMV      float64      `json:"delta_mv"`
	CI           *PotentialCI `json:"ci,omitempty"`
}

// PotentialCI is the bootstrap interval of a point.
type PotentialCI struct {
	Confidence float64    `json:"confidence"`
	VMV        [2]float64 `json:"v_mv"`
	DeltaMV    [2]float64 `json:"delta_mv"`
}
