package wire

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"

	"sluice/fit"
)

// FitResult is the result object of one fitted curve, the same from
// `sluice fit --format json` and from POST /v1/fits. Its field names are a
// contract.
type FitResult struct {
	Curve      string  `json:"curve"`
	Model      string  `json:"model"`
	Status     string  `json:"status"`
	Params     Params  `json:"params"`
	EC50       Potency `json:"ec50"`
	PEC50      Num     `json:"pec50"`
	Stats      Stats   `json:"stats"`
	Confidence Num     `json:"confidence"`
	// Covariance is σ²(JᵀWJ)⁻¹ over params, in their order, zero for
	// fixed and at-bound parameters.
	Covariance    [][]Num        `json:"covariance"`
	Bootstrap     *BootstrapInfo `json:"bootstrap"`
	Flags         []string       `json:"flags"`
	EngineVersion string         `json:"engine_version"`
	Caution       string         `json:"caution"`

	// The activity call (fit.Result.Activity): "active", "inactive" or
	// "inconclusive", why, and the P of the F test against a flat line.
	// An inactive curve has null ec50, pec50 and params.log_ec50.
	Activity  string `json:"activity"`
	Reason    string `json:"reason"`
	ActivityP Num    `json:"activity_p"`
	// Effect is the response change the data show (fit.Result.Effect).
	Effect Num `json:"effect"`
	// Qualifier is "=", ">" or "<" for a reported EC50 (null when none);
	// Bound is the tested concentration it refers to, molar (null for "=").
	Qualifier *string `json:"qualifier"`
	Bound     Num     `json:"bound"`
	// Direction is "rising" or "falling" (null when the fit has no
	// window); PlateauZero and PlateauHigh are the fitted responses at
	// zero and at high concentration. bottom and top in params are the
	// model's parameters, kept for pipelines.
	Direction   *string `json:"direction"`
	PlateauZero Num     `json:"plateau_zero"`
	PlateauHigh Num     `json:"plateau_high"`
	// IC50 and PIC50 repeat ec50 and pec50 under the inhibitor's names
	// for a falling curve, and are null otherwise; ec50 and pec50 are
	// always there, whatever the direction.
	IC50  *Potency `json:"ic50"`
	PIC50 Num      `json:"pic50"`
	// Comparison tests the model against the Hill equation it nests (null
	// for hill).
	Comparison *Comparison `json:"comparison"`
	// Notes explain flags in sentences.
	Notes []string `json:"notes"`
}

// Comparison is fit.Comparison on the wire.
type Comparison struct {
	Simpler        string `json:"simpler"`
	SimplerRSS     Num    `json:"simpler_rss"`
	SimplerDOF     int    `json:"simpler_dof"`
	F              Num    `json:"f"`
	P              Num    `json:"p"`
	DeltaAICc      Num    `json:"delta_aicc"`
	Decided        bool   `json:"decided"`
	PrefersSimpler bool   `json:"prefers_simpler"`
	Verdict        string `json:"verdict"`
}

// Param is one parameter of a FitResult.
type Param struct {
	Estimate Num     `json:"estimate"`
	SE       Num     `json:"se"`
	WaldCI   [2]Num  `json:"wald_ci"`
	BootCI   *[2]Num `json:"boot_ci,omitempty"`
	// BootInterval is the method behind BootCI (bca or percentile): an
	// estimate on a bound gets percentile even when bca was asked for.
	BootInterval string `json:"boot_interval,omitempty"`
	Fixed        bool   `json:"fixed"`
	AtBound      bool   `json:"at_bound"`
}

// NamedParam is a parameter with its name.
type NamedParam struct {
	Name string
	Param
}

// Params encodes as a JSON object whose keys keep the model's parameter order.
type Params []NamedParam

// Estimates returns the estimates in order: the parameter vector of the
// model (fit.Model.Value and the role accessors read it).
func (ps Params) Estimates() []float64 {
	theta := make([]float64, len(ps))
	for i, p := range ps {
		theta[i] = float64(p.Estimate)
	}
	return theta
}

// MarshalJSON writes {"bottom": {...}, "top": {...}, ...} in order.
func (ps Params) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, p := range ps {
		if i > 0 {
			b.WriteByte(',')
		}
		k, err := json.Marshal(p.Name)
		if err != nil {
			return nil, err
		}
		v, err := json.Marshal(p.Param)
		if err != nil {
			return nil, err
		}
		b.Write(k)
		b.WriteByte(':')
		b.Write(v)
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// UnmarshalJSON reads the object back, keeping its key order.
func (ps *Params) UnmarshalJSON(data []byte) error {
	dec := json.NewDecoder(bytes.NewReader(data))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return fmt.Errorf("params: want an object")
	}
	*ps = (*ps)[:0]
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return err
		}
		var p NamedParam
		p.Name, _ = t.(string)
		if err := dec.Decode(&p.Param); err != nil {
			return err
		}
		*ps = append(*ps, p)
	}
	_, err := dec.Token()
	return err
}

// Potency is a concentration in molar with its interval.
type Potency struct {
	Estimate Num    `json:"estimate"`
	CI       [2]Num `json:"ci"`
}

// Stats are the goodness-of-fit figures.
type Stats struct {
	N          int `json:"n"`
	DOF        int `json:"dof"`
	RSS        Num `json:"rss"`
	Sigma      Num `json:"sigma"`
	R2         Num `json:"r2"`
	AICc       Num `json:"aicc"`
	Iterations int `json:"iterations"`
}

// BootstrapInfo describes the resampling behind boot_ci.
type BootstrapInfo struct {
	Resamples       int `json:"resamples"`
	Failed          int `json:"failed"`
	AtBound         int `json:"at_bound"`
	JackknifeFailed int `json:"jackknife_failed"`
	// Calibration is the factor t(N − p)/z by which each interval was
	// widened about the estimate (residual scheme; 1 for case); absent
	// from results of engines before 0.3.1, which did not widen.
	Calibration *Num   `json:"calibration,omitempty"`
	Scheme      string `json:"scheme"`
	Interval    string `json:"interval"`
	Seed        uint64 `json:"seed"`
}

// FromFit converts a fit.Result.
func FromFit(r *fit.Result) FitResult {
	out := FitResult{Curve: r.Curve, Model: string(r.Model), Status: r.Status,
		Flags: append([]string{}, r.Flags...), EngineVersion: fit.EngineVersion, Caution: Caution}
	for _, p := range r.Params {
		np := NamedParam{Name: p.Name, Param: Param{Estimate: Num(p.Estimate), SE: Num(p.SE),
			WaldCI: [2]Num{Num(p.WaldLo), Num(p.WaldHi)}, Fixed: p.Fixed, AtBound: p.AtBound}}
		if r.Boot != nil {
			np.BootCI = &[2]Num{Num(p.BootLo), Num(p.BootHi)}
			np.BootInterval = string(p.BootInterval)
		}
		out.Params = append(out.Params, np)
	}
	est, lo, hi := r.EC50()
	out.EC50 = Potency{Estimate: Num(est), CI: [2]Num{Num(lo), Num(hi)}}
	out.PEC50 = Num(-math.Log10(est))
	np := len(r.Params)
	out.Covariance = make([][]Num, np)
	for i := range out.Covariance {
		out.Covariance[i] = make([]Num, np)
		for j := range out.Covariance[i] {
			if len(r.Cov) == np*np {
				out.Covariance[i][j] = Num(r.Cov[i*np+j])
			} else {
				out.Covariance[i][j] = Num(math.NaN())
			}
		}
	}
	out.Confidence = Num(r.Confidence)
	out.Stats = Stats{N: r.N, DOF: r.DOF, RSS: Num(r.RSS), Sigma: Num(r.Sigma), R2: Num(r.R2),
		AICc: Num(r.AICc), Iterations: r.Iterations}
	out.Activity, out.Reason, out.ActivityP, out.Effect = string(r.Activity), r.Reason, Num(r.ActivityP), Num(r.Effect)
	if r.Qualifier != "" {
		q := r.Qualifier
		out.Qualifier = &q
	}
	out.Bound = Num(r.Bound)
	if r.Direction != fit.Flat {
		d := string(r.Direction)
		out.Direction = &d
	}
	out.PlateauZero, out.PlateauHigh = Num(r.PlateauZero), Num(r.PlateauHigh)
	if r.Direction == fit.Falling {
		ic := out.EC50
		out.IC50, out.PIC50 = &ic, out.PEC50
	} else {
		out.PIC50 = Num(math.NaN())
	}
	if c := r.Comparison; c != nil {
		out.Comparison = &Comparison{Simpler: string(c.Simpler), SimplerRSS: Num(c.SimplerRSS), SimplerDOF: c.SimplerDOF,
			F: Num(c.F.F), P: Num(c.F.P), DeltaAICc: Num(c.DeltaAICc), Decided: c.Decided, PrefersSimpler: c.PrefersSimpler,
			Verdict: c.Verdict}
	}
	out.Notes = append([]string{}, r.Notes...)
	if b := r.Boot; b != nil {
		out.Bootstrap = &BootstrapInfo{Resamples: b.Resamples, Failed: b.Failed, AtBound: b.AtBound,
			JackknifeFailed: b.JackknifeFailed, Scheme: string(b.Scheme), Interval: string(b.Interval), Seed: b.Seed}
		k := Num(b.Calibration)
		out.Bootstrap.Calibration = &k
	}
	return out
}

// StoredFit is a FitResult as the API returns it: with its ID and
// provenance when stored.
type StoredFit struct {
	ID          string            `json:"id,omitempty"`
	CreatedAt   string            `json:"created_at,omitempty"`  // RFC 3339, UTC
	MeasuredAt  string            `json:"measured_at,omitempty"` // RFC 3339, UTC; the experiment time
	SubmittedBy string            `json:"submitted_by,omitempty"`
	AssayID     string            `json:"assay_id,omitempty"`
	CompoundID  string            `json:"compound_id,omitempty"`
	RefitOf     string            `json:"refit_of,omitempty"`
	InputSHA256 string            `json:"input_sha256,omitempty"`
	Labels      map[string]string `json:"labels,omitempty"`
	FitResult
}
