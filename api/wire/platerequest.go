package wire

import (
	"encoding/json"

	"sluice/fit/plate"
)

// PlateRequest is the JSON body of POST /v1/plates. A CSV or reader-grid
// upload carries the same plate fields as query parameters.
type PlateRequest struct {
	AssayID    string            `json:"assay_id,omitempty"`
	Barcode    string            `json:"barcode"`
	Format     int               `json:"format"`
	MeasuredAt string            `json:"measured_at,omitempty"`
	ConcUnit   string            `json:"conc_unit,omitempty"`
	Mode       string            `json:"mode,omitempty"`
	Wells      []Well            `json:"wells"`
	Fit        *PlateFit         `json:"fit,omitempty"`
	QC         *plate.Thresholds `json:"qc,omitempty"`
}

// Well is one well of a plate or layout, as JSON sends it. Absent numbers
// are nil: a sample needs conc, a read well needs value, and a layout has
// no values.
type Well struct {
	Well           string   `json:"well"`
	Role           string   `json:"role"`
	CompoundID     string   `json:"compound_id,omitempty"`
	Conc           *float64 `json:"conc,omitempty"`
	Value          *float64 `json:"value,omitempty"`
	AntagonistID   string   `json:"antagonist_id,omitempty"`
	AntagonistConc *float64 `json:"antagonist_conc,omitempty"`
}

// PlateFit are the fit settings of a plate, as in POST /v1/fits.
type PlateFit struct {
	Model      string             `json:"model,omitempty"`
	Fixed      map[string]float64 `json:"fixed,omitempty"`
	Confidence float64            `json:"confidence,omitempty"`
	MaxHill    float64            `json:"max_hill,omitempty"`
	Bootstrap  *BootstrapIn       `json:"bootstrap,omitempty"`
	// The activity call (fit.Settings): the F test's α (0 means 0.01),
	// the assay window in response units (0 means unknown: no minimum
	// effect; plates default to 100, their data being percent of
	// control) and the minimum effect as a fraction of it (0 means 0.2).
	ActivityAlpha float64 `json:"activity_alpha,omitempty"`
	Window        float64 `json:"window,omitempty"`
	MinEffect     float64 `json:"min_effect,omitempty"`
}

// PlateSettings is a stored plate's settings document: what its job needs
// besides the wells. A bootstrap's seed is always set, so that the job
// (and a retry of it) is repeatable bit for bit.
type PlateSettings struct {
	Fit PlateFit          `json:"fit"`
	QC  *plate.Thresholds `json:"qc,omitempty"`
}

// PlateAccepted is the 202 answer to POST /v1/plates.
type PlateAccepted struct {
	PlateID string `json:"plate_id"`
	JobID   int64  `json:"job_id"`
}

// LayoutRequest is the body of POST /v1/layouts: a plate map reused by
// reader-grid uploads.
type LayoutRequest struct {
	ID       string `json:"id"`
	Name     string `json:"name"`
	Format   int    `json:"format"`
	ConcUnit string `json:"conc_unit,omitempty"`
	Wells    []Well `json:"wells"`
}

// LayoutCreated is the 201 answer to POST /v1/layouts.
type LayoutCreated struct {
	ID       string `json:"id"`
	Name     string `json:"name"`
	Format   int    `json:"format"`
	Wells    int    `json:"wells"`
	ConcUnit string `json:"conc_unit"`
}

// LayoutView is GET /v1/layouts/{id} (with its wells, concentrations
// molar) and an item of GET /v1/layouts (without).
type LayoutView struct {
	ID        string `json:"id"`
	Name      string `json:"name"`
	Format    int    `json:"format"`
	ConcUnit  string `json:"conc_unit"`
	Wells     []Well `json:"wells,omitempty"`
	CreatedAt string `json:"created_at"`
	CreatedBy string `json:"created_by"`
}

// PlateView is GET /v1/plates/{id}: the plate, its job's progress, its QC
// (PlateQC, null until assessed) and, once done, its curves (PlateCurve)
// and Schild analyses.
type PlateView struct {
	PlateID    string            `json:"plate_id"`
	Barcode    string            `json:"barcode"`
	Format     int               `json:"format"`
	AssayID    string            `json:"assay_id,omitempty"`
	MeasuredAt string            `json:"measured_at,omitempty"`
	Mode       string            `json:"mode"`
	Status     string            `json:"status"`
	JobID      int64             `json:"job_id"`
	Progress   Progress          `json:"progress"`
	QC         json.RawMessage   `json:"qc"`
	Curves     []json.RawMessage `json:"curves"`
	Schild     []json.RawMessage `json:"schild,omitempty"`
	Error      string            `json:"error,omitempty"`
	Caution    string            `json:"caution"`
}

// Progress counts fitted curves.
type Progress struct {
	Done  int `json:"done"`
	Total int `json:"total"`
}

// JobView is GET /v1/jobs/{id}.
type JobView struct {
	ID      int64  `json:"id"`
	PlateID string `json:"plate_id"`
	// AnalysisID is the queued single analysis a sluice_analysis job runs
	// (GET /v1/analyses/{id}); "" for a plate's job.
	AnalysisID string   `json:"analysis_id,omitempty"`
	Status     string   `json:"status"` // queued, running, done, failed
	Attempt    int      `json:"attempt"`
	Progress   Progress `json:"progress"`
	Error      string   `json:"error,omitempty"`
}

// PlateCurve is one curve of a plate: the result object with the compound
// (and antagonist) it belongs to.
type PlateCurve struct {
	// ID is the curve's potency record (GET /v1/curves/{id}); set when
	// read back, not stored in the document.
	ID string `json:"id,omitempty"`
	// PlateQCFailed: the plate failed QC, so the curve is not usable in
	// potency histories by default. Set when read back.
	PlateQCFailed  bool    `json:"plate_qc_failed,omitempty"`
	Key            string  `json:"key"`
	CompoundID     string  `json:"compound_id"`
	AntagonistID   string  `json:"antagonist_id,omitempty"`
	AntagonistConc float64 `json:"antagonist_conc,omitempty"`
	FitResult
}

// PlateWindow is the assay window of a plate's curves: Window when set,
// else 100, since plate curves are normalised to percent of control.
func (f PlateFit) PlateWindow() float64 {
	if f.Window == 0 {
		return 100
	}
	return f.Window
}
