package wire

import (
	"math"

	"sluice/fit/schild"
)

// SchildRequest is the body of POST /v1/schild. Concentrations of agonist
// and antagonist are in conc_unit.
type SchildRequest struct {
	ConcUnit     string        `json:"conc_unit,omitempty"`
	AgonistID    string        `json:"agonist_id,omitempty"`
	AntagonistID string        `json:"antagonist_id,omitempty"`
	Curves       []SchildCurve `json:"curves"`
	Bootstrap    *BootstrapIn  `json:"bootstrap,omitempty"`
	Confidence   float64       `json:"confidence,omitempty"`
	Store        *bool         `json:"store,omitempty"`
}

// SchildCurve is one agonist curve at one antagonist concentration.
type SchildCurve struct {
	AntagonistConc *float64  `json:"antagonist_conc"`
	Points         []PointIn `json:"points"`
}

// Estimate is an estimate with its interval; fields may be null.
type Estimate struct {
	Estimate Num    `json:"estimate"`
	SE       *Num   `json:"se,omitempty"`
	CI       [2]Num `json:"ci"`
}

// FromEstimate is an estimate on the wire, with its SE when withSE.
func FromEstimate(e schild.Estimate, withSE bool) *Estimate {
	w := &Estimate{Estimate: Num(e.Estimate), CI: [2]Num{Num(e.Lo), Num(e.Hi)}}
	if withSE {
		se := Num(e.SE)
		w.SE = &se
	}
	return w
}

// SchildResponse is the answer of POST /v1/schild and GET /v1/schild/{id},
// and a plate's per-pair analysis.
type SchildResponse struct {
	ID           string              `json:"id,omitempty"`
	CreatedAt    string              `json:"created_at,omitempty"`
	PlateID      string              `json:"plate_id,omitempty"`
	AgonistID    string              `json:"agonist_id,omitempty"`
	AntagonistID string              `json:"antagonist_id,omitempty"`
	DoseRatios   []SchildDoseRatio   `json:"dose_ratios"`
	Regression   *SchildRegression   `json:"regression"`
	Global       *SchildGlobal       `json:"global"`
	Competitive  bool                `json:"competitive"`
	Flags        []string            `json:"flags"`
	Withheld     string              `json:"withheld,omitempty"`
	ChengPrusoff *SchildChengPrusoff `json:"cheng_prusoff,omitempty"`
	Curves       []SchildCurveResult `json:"curves"`
	Confidence   float64             `json:"confidence"`
	Caution      string              `json:"caution"`
}

// SchildDoseRatio is one dose ratio with its interval.
type SchildDoseRatio struct {
	AntagonistConc float64 `json:"antagonist_conc"`
	DoseRatio      Num     `json:"dose_ratio"`
	CI             [2]Num  `json:"ci"`
}

// SchildRegression is the Schild regression's slope and pA2.
type SchildRegression struct {
	Slope *Estimate `json:"slope"`
	PA2   *Estimate `json:"pa2"`
}

// SchildGlobal is the global fit; PKB is nil when s = 1 is rejected.
type SchildGlobal struct {
	PA2         *Estimate          `json:"pa2"`
	Slope       *Estimate          `json:"slope"`
	PKB         *Estimate          `json:"pkb"`
	SlopeUnityP Num                `json:"slope_unity_p"`
	Shared      map[string]float64 `json:"shared"`
	Bootstrap   *SchildBootstrap   `json:"bootstrap,omitempty"`
}

// SchildChengPrusoff is the IC50-based estimate for insurmountable
// antagonism.
type SchildChengPrusoff struct {
	AgonistConc float64 `json:"agonist_conc"`
	IC50        float64 `json:"ic50"`
	PIC50       float64 `json:"pic50"`
	KB          float64 `json:"kb"`
	PKB         float64 `json:"pkb"`
	Note        string  `json:"note"`
}

// SchildBootstrap describes the resampling behind the global intervals.
type SchildBootstrap struct {
	Resamples int    `json:"resamples"`
	Failed    int    `json:"failed"`
	Seed      uint64 `json:"seed"`
	Scheme    string `json:"scheme"`
	Interval  string `json:"interval"`
}

// SchildCurveResult is an individual curve's fit with its antagonist
// concentration (molar).
type SchildCurveResult struct {
	AntagonistConc float64 `json:"antagonist_conc"`
	FitResult
}

// FromSchild is an analysis of curves on the wire; seed is its bootstrap's.
func FromSchild(r *schild.Result, curves []schild.Curve, seed uint64) SchildResponse {
	out := SchildResponse{Competitive: r.Competitive, Flags: append([]string{}, r.Flags...), Withheld: r.Withheld,
		Confidence: r.Confidence, Caution: Caution}
	for _, d := range r.DoseRatios {
		out.DoseRatios = append(out.DoseRatios, SchildDoseRatio{d.AntagonistConc, Num(d.DoseRatio.Estimate), [2]Num{Num(d.DoseRatio.Lo), Num(d.DoseRatio.Hi)}})
	}
	if reg := r.Regression; reg != nil && r.Competitive {
		out.Regression = &SchildRegression{FromEstimate(reg.SlopeCI(r.Confidence), true), FromEstimate(reg.PA2CI(r.Confidence), false)}
	}
	if g := r.Global; g != nil {
		gl := &SchildGlobal{PA2: FromEstimate(g.PA2, false), Slope: FromEstimate(g.Slope, true), SlopeUnityP: Num(g.SlopeUnityP), Shared: g.Shared}
		if g.PKBReported {
			gl.PKB = FromEstimate(g.PKB, false)
		}
		if g.Resamples > 0 {
			gl.Bootstrap = &SchildBootstrap{Resamples: g.Resamples, Failed: g.Failed, Seed: seed, Scheme: "residual within curves", Interval: "percentile"}
		}
		out.Global = gl
	}
	if cp := r.ChengPrusoff; cp != nil {
		out.ChengPrusoff = &SchildChengPrusoff{cp.AgonistConc, cp.IC50, -math.Log10(cp.IC50), cp.KB, cp.PKB,
			"IC50 of the inhibition of the control's EC80 response; KB by the functional Cheng–Prusoff correction, which assumes competition with the agonist — for an agonist-independent block the pIC50 is the better estimate"}
	}
	for i, c := range r.Curves {
		out.Curves = append(out.Curves, SchildCurveResult{AntagonistConc: curves[i].AntagonistConc, FitResult: FromFit(c)})
	}
	return out
}
