package wire

import "encoding/json"

// FitRequest is the body of POST /v1/fits.
type FitRequest struct {
	Model      string             `json:"model"`
	ConcUnit   string             `json:"conc_unit"`
	Points     []PointIn          `json:"points"`
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
	// Store defaults to true.
	Store      *bool             `json:"store,omitempty"`
	AssayID    string            `json:"assay_id,omitempty"`
	CompoundID string            `json:"compound_id,omitempty"`
	RefitOf    string            `json:"refit_of,omitempty"`
	Labels     map[string]string `json:"labels,omitempty"`
	// MeasuredAt is the experiment time (RFC 3339), which orders the
	// compound's potency history; empty means the upload time.
	MeasuredAt string `json:"measured_at,omitempty"`
}

// PointIn is one point as submitted, in conc_unit.
type PointIn struct {
	Conc     *float64 `json:"conc"`
	Response *float64 `json:"response"`
	Weight   *float64 `json:"weight,omitempty"`
}

// BootstrapIn asks for bootstrap intervals. Resamples 0 means 1000; a
// missing seed is drawn at random and returned, so the run can be repeated.
type BootstrapIn struct {
	Resamples int     `json:"resamples,omitempty"`
	Scheme    string  `json:"scheme,omitempty"`
	Interval  string  `json:"interval,omitempty"`
	Seed      *uint64 `json:"seed,omitempty"`
}

// FitSettings is a stored fit's settings document: the settings as
// requested, with the model and confidence resolved and the bootstrap seed
// that was used, so that the run can be repeated bit for bit.
type FitSettings struct {
	Model      string             `json:"model"`
	Fixed      map[string]float64 `json:"fixed,omitempty"`
	Confidence float64            `json:"confidence"`
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

// FitInput is a stored fit's input document: the points as submitted, in
// their unit.
type FitInput struct {
	ConcUnit string    `json:"conc_unit"`
	Points   []PointIn `json:"points"`
}

// FitList is the body of GET /v1/fits.
type FitList struct {
	Fits       []json.RawMessage `json:"fits"`
	NextCursor string            `json:"next_cursor,omitempty"`
	Caution    string            `json:"caution"`
}
