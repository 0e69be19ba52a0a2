package wire

// DriftBaseline is the baseline a chart was judged against.
type DriftBaseline struct {
	Mean Num `json:"mean"`
	SD   Num `json:"sd"`
	// Source is "explicit" (set by an admin), "plates" (estimated from
	// listed plates), "auto" (from the assay's first accepted plates) or
	// "standardised" (the r4s chart: control z values against 0 ± 1).
	Source string `json:"source"`
	// Runs is how many accepted plates an auto baseline uses.
	Runs int `json:"runs,omitempty"`
	// Plates are the plates a "plates" baseline was estimated from.
	Plates []string `json:"plates,omitempty"`
}

// DriftPoint is one plate's point of a chart (two for r4s: the max control
// then the min control).
type DriftPoint struct {
	PlateID    string   `json:"plate_id"`
	Barcode    string   `json:"barcode"`
	MeasuredAt string   `json:"measured_at"`
	Value      Num      `json:"value"`
	Z          Num      `json:"z"`
	EWMA       Num      `json:"ewma"`
	EWMALimits [2]Num   `json:"ewma_limits"`
	CUSUMHi    Num      `json:"cusum_hi"`
	CUSUMLo    Num      `json:"cusum_lo"`
	Violations []string `json:"violations"`
}

// DriftChart is GET /v1/assays/{id}/drift: one metric of an assay over its
// plates in experiment-time order. Baseline is null and status
// "no_baseline" while the assay lacks the plates to establish one.
type DriftChart struct {
	AssayID  string         `json:"assay_id"`
	Metric   string         `json:"metric"`
	Baseline *DriftBaseline `json:"baseline"`
	Status   string         `json:"status"`
	Points   []DriftPoint   `json:"points"`
}

// DriftViolation is a recorded rule violation with the baseline it was
// judged against.
type DriftViolation struct {
	PlateID    string        `json:"plate_id"`
	Rule       string        `json:"rule"`
	MeasuredAt string        `json:"measured_at"`
	Value      Num           `json:"value"`
	Z          Num           `json:"z"`
	Baseline   DriftBaseline `json:"baseline"`
	RecordedAt string        `json:"recorded_at"`
}

// DriftStatus is one chart in GET /v1/drift.
type DriftStatus struct {
	AssayID         string          `json:"assay_id"`
	Metric          string          `json:"metric"`
	Status          string          `json:"status"`
	UpdatedAt       string          `json:"updated_at"`
	LatestViolation *DriftViolation `json:"latest_violation"`
}

// DriftOverview is GET /v1/drift: every charted assay and metric.
type DriftOverview struct {
	Charts []DriftStatus `json:"charts"`
}

// BaselineRequest is PUT /v1/assays/{id}/baselines/{metric}: exactly one
// of an explicit mean and SD, a list of plates to estimate them from, or
// an automatic baseline from the first runs accepted plates (runs 0: 20).
type BaselineRequest struct {
	Mean   *float64 `json:"mean,omitempty"`
	SD     *float64 `json:"sd,omitempty"`
	Plates []string `json:"plates,omitempty"`
	Auto   bool     `json:"auto,omitempty"`
	Runs   int      `json:"runs,omitempty"`
}

// QCRulesRequest is POST /v1/qc/rules: the drift rules on a series the
// caller keeps elsewhere. Baseline, when absent, is estimated from the
// first baseline_runs values (0: 20).
type QCRulesRequest struct {
	Baseline     *QCBaselineIn `json:"baseline,omitempty"`
	BaselineRuns int           `json:"baseline_runs,omitempty"`
	Points       []QCPointIn   `json:"points"`
	// Mode is "warning" (default: 1-2s only warns) or "trigger" (1981).
	Mode string `json:"mode,omitempty"`
	// Rules lists the rules to report ("1-2s", "1-3s", "2-2s", "R-4s",
	// "4-1s", "10-x", "ewma", "cusum"); empty means all.
	Rules      []string `json:"rules,omitempty"`
	EWMALambda float64  `json:"ewma_lambda,omitempty"`
	EWMAL      float64  `json:"ewma_l,omitempty"`
	CUSUMK     float64  `json:"cusum_k,omitempty"`
	CUSUMH     float64  `json:"cusum_h,omitempty"`
}

// QCBaselineIn is a given baseline.
type QCBaselineIn struct {
	Mean *float64 `json:"mean"`
	SD   *float64 `json:"sd"`
}

// QCPointIn is one value of a series sent to POST /v1/qc/rules.
type QCPointIn struct {
	// Time (RFC 3339) orders the series; optional.
	Time  string   `json:"time,omitempty"`
	Value *float64 `json:"value"`
	// Group names the run (R-4s looks within one); optional.
	Group string `json:"group,omitempty"`
}

// QCRulesPoint is one evaluated point of POST /v1/qc/rules.
type QCRulesPoint struct {
	Value      Num      `json:"value"`
	Z          Num      `json:"z"`
	EWMA       Num      `json:"ewma"`
	EWMALimits [2]Num   `json:"ewma_limits"`
	CUSUMHi    Num      `json:"cusum_hi"`
	CUSUMLo    Num      `json:"cusum_lo"`
	Violations []string `json:"violations"`
	Status     string   `json:"status"`
}

// QCRulesResponse is POST /v1/qc/rules' reply.
type QCRulesResponse struct {
	Baseline DriftBaseline  `json:"baseline"`
	Status   string         `json:"status"`
	Points   []QCRulesPoint `json:"points"`
}
