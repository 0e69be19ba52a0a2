package wire

import "encoding/json"

// PotencyRecord is one stored curve of a compound as its potency history
// shows it, whatever produced it (a single fit or a plate curve).
type PotencyRecord struct {
	ID         string `json:"id"`
	Kind       string `json:"kind"` // "fit" or "plate_curve"
	AssayID    string `json:"assay_id,omitempty"`
	CompoundID string `json:"compound_id"`
	MeasuredAt string `json:"measured_at"` // RFC 3339, UTC: the experiment time
	PlateID    string `json:"plate_id,omitempty"`
	Barcode    string `json:"barcode,omitempty"`
	// LogEC50 is log10 of the EC50 in M (null when not estimated), with
	// its interval (bootstrap when bootstrapped, else Wald); PEC50 = −LogEC50.
	LogEC50   Num      `json:"log_ec50"`
	LogEC50CI [2]Num   `json:"log_ec50_ci"`
	PEC50     Num      `json:"pec50"`
	Status    string   `json:"status"`
	Activity  string   `json:"activity"`  // active, inactive or inconclusive
	Qualifier string   `json:"qualifier"` // "=", ">" or "<"
	Flags     []string `json:"flags"`
	// PlateQCFailed: the plate the curve came from failed QC.
	PlateQCFailed bool         `json:"plate_qc_failed"`
	Review        *ReviewEvent `json:"review"` // the latest review event; null when never reviewed
	RefitOf       string       `json:"refit_of,omitempty"`
	Superseded    bool         `json:"superseded"`
	// Usable: the run counts in the summary; otherwise Excluded says why.
	Usable   bool   `json:"usable"`
	Excluded string `json:"excluded,omitempty"`
}

// ReviewEvent is one review of a curve: who decided what, when and why.
type ReviewEvent struct {
	ID       string `json:"id"`
	CurveID  string `json:"curve_id"`
	Decision string `json:"decision"` // "accepted" or "rejected"
	Reason   string `json:"reason,omitempty"`
	By       string `json:"by"`
	At       string `json:"at"` // RFC 3339, UTC
}

// PotencySummary summarises the usable runs of a history (FACTS §4, §8).
type PotencySummary struct {
	N           int    `json:"n"`
	MeanLogEC50 Num    `json:"mean_log_ec50"`
	SDLogEC50   Num    `json:"sd_log_ec50"`
	GeoMeanEC50 Num    `json:"geo_mean_ec50"` // M, 10^mean_log_ec50
	GeoMeanCI   [2]Num `json:"geo_mean_ci"`   // M, the t interval of the log mean back-transformed
	Confidence  Num    `json:"confidence"`
	PEC50Mean   Num    `json:"pec50_mean"`
	// MSR is the production MSR over the last MSRWindow usable runs
	// (MSRRuns of them); null with fewer than 3. MSROverall uses every
	// usable run.
	MSR        Num `json:"msr"`
	MSRWindow  int `json:"msr_window"`
	MSRRuns    int `json:"msr_runs"`
	MSROverall Num `json:"msr_overall"`
	// Excluded counts the runs left out, by reason (each under its first).
	Excluded map[string]int `json:"excluded"`
}

// PotencyHistory is a compound's record in one assay.
type PotencyHistory struct {
	CompoundID string          `json:"compound_id"`
	AssayID    string          `json:"assay_id"`
	Runs       []PotencyRecord `json:"runs"`
	Summary    PotencySummary  `json:"summary"`
	Caution    string          `json:"caution,omitempty"`
}

// CompoundPotency is GET /v1/compounds/{id}/potency without an assay_id:
// one history per assay, by assay ID.
type CompoundPotency struct {
	CompoundID string           `json:"compound_id"`
	Assays     []PotencyHistory `json:"assays"`
	Caution    string           `json:"caution"`
}

// AssayPotencyRow is one compound of an assay's compound table.
type AssayPotencyRow struct {
	CompoundID   string         `json:"compound_id"`
	Runs         int            `json:"runs"`
	LastMeasured string         `json:"last_measured_at"`
	Summary      PotencySummary `json:"summary"`
}

// AssayPotency is GET /v1/assays/{id}/potency: one page of the compound
// table.
type AssayPotency struct {
	AssayID    string            `json:"assay_id"`
	Compounds  []AssayPotencyRow `json:"compounds"`
	NextCursor string            `json:"next_cursor,omitempty"`
	Caution    string            `json:"caution"`
}

// ReviewRequest is the body of POST /v1/curves/{id}/review.
type ReviewRequest struct {
	Decision string `json:"decision"`
	Reason   string `json:"reason"`
}

// RefitRequest is the body of POST /v1/curves/{id}/refit: point indices
// (of a single fit's input, from 0) or well names (of a plate curve) to
// leave out, and why.
type RefitRequest struct {
	Exclude []json.RawMessage `json:"exclude"`
	Reason  string            `json:"reason"`
}

// Curve is GET /v1/curves/{id}: a stored curve of either kind, its
// potency record, its review events and, for a refit, what it left out.
type Curve struct {
	PotencyRecord
	CurveKey    string          `json:"curve_key,omitempty"`
	Exclusions  json.RawMessage `json:"exclusions,omitempty"`
	RefitReason string          `json:"refit_reason,omitempty"`
	Reviews     []ReviewEvent   `json:"reviews"`
	Result      json.RawMessage `json:"result"`
	Caution     string          `json:"caution"`
}

// MSRStudyRequest is the body of POST /v1/msr-studies: two runs of an
// assay, each a list of plates, or explicit pairs of curves.
type MSRStudyRequest struct {
	AssayID string      `json:"assay_id"`
	Run1    []string    `json:"run1,omitempty"`
	Run2    []string    `json:"run2,omitempty"`
	Pairs   []CurvePair `json:"pairs,omitempty"`
}

// CurvePair is one compound's curve in each run of a study.
type CurvePair struct {
	Run1 string `json:"run1"`
	Run2 string `json:"run2"`
}

// MSRStudy is a replicate-experiment study's answer (FACTS §4).
type MSRStudy struct {
	ID        string         `json:"id"`
	AssayID   string         `json:"assay_id"`
	CreatedAt string         `json:"created_at"`
	CreatedBy string         `json:"created_by"`
	N         int            `json:"n"`
	MeanDiff  Num            `json:"mean_diff"`
	SDDiff    Num            `json:"sd_diff"`
	MR        Num            `json:"mr"`
	MSR       Num            `json:"msr"`
	RL        [2]Num         `json:"rl"`
	LsA       [2]Num         `json:"lsa"`
	Pass      bool           `json:"pass"`
	Failed    []string       `json:"failed"`
	Pairs     []MSRStudyPair `json:"pairs"`
	Caution   string         `json:"caution"`
}

// MSRStudyPair is one compound of a study: its log10 potency in each run.
type MSRStudyPair struct {
	CompoundID string `json:"compound_id"`
	Run1       Num    `json:"run1_log_ec50"`
	Run2       Num    `json:"run2_log_ec50"`
}

// PlateList is GET /v1/plates.
type PlateList struct {
	Plates     []json.RawMessage `json:"plates"`
	NextCursor string            `json:"next_cursor,omitempty"`
}

// WellOut is one well of GET /v1/plates/{id}/wells: the raw value and,
// once the plate is assessed, the value normalised to its controls.
type WellOut struct {
	Well           string `json:"well"`
	Row            int    `json:"row"`
	Col            int    `json:"col"`
	Role           string `json:"role"`
	CompoundID     string `json:"compound_id,omitempty"`
	Conc           Num    `json:"conc"` // M
	Value          *Num   `json:"value"`
	Normalised     *Num   `json:"normalised"`
	AntagonistID   string `json:"antagonist_id,omitempty"`
	AntagonistConc Num    `json:"antagonist_conc,omitempty"`
}

// WellList is GET /v1/plates/{id}/wells.
type WellList struct {
	PlateID string    `json:"plate_id"`
	Mode    string    `json:"mode"`
	Wells   []WellOut `json:"wells"`
}
