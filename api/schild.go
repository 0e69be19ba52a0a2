package api

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"net/http"
	"sort"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/api/plot"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/schild"
)

// SchildRequest is the body of POST /v1/schild. Concentrations of agonist
// and antagonist are in conc_unit.
type SchildRequest struct {
	ConcUnit     string            `json:"conc_unit,omitempty"`
	AgonistID    string            `json:"agonist_id,omitempty"`
	AntagonistID string            `json:"antagonist_id,omitempty"`
	Curves       []SchildCurve     `json:"curves"`
	Bootstrap    *wire.BootstrapIn `json:"bootstrap,omitempty"`
	Confidence   float64           `json:"confidence,omitempty"`
	Store        *bool             `json:"store,omitempty"`
}

// SchildCurve is one agonist curve at one antagonist concentration.
type SchildCurve struct {
	AntagonistConc *float64       `json:"antagonist_conc"`
	Points         []wire.PointIn `json:"points"`
}

// WireEstimate is an estimate with its interval; fields may be null.
type WireEstimate struct {
	Estimate wire.Num    `json:"estimate"`
	SE       *wire.Num   `json:"se,omitempty"`
	CI       [2]wire.Num `json:"ci"`
}

func wireEst(e schild.Estimate, withSE bool) *WireEstimate {
	w := &WireEstimate{Estimate: wire.Num(e.Estimate), CI: [2]wire.Num{wire.Num(e.Lo), wire.Num(e.Hi)}}
	if withSE {
		se := wire.Num(e.SE)
		w.SE = &se
	}
	return w
}

// SchildResponse is the answer of POST /v1/schild and GET /v1/schild/{id}.
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
	AntagonistConc float64     `json:"antagonist_conc"`
	DoseRatio      wire.Num    `json:"dose_ratio"`
	CI             [2]wire.Num `json:"ci"`
}

// SchildRegression is the Schild regression's slope and pA2.
type SchildRegression struct {
	Slope *WireEstimate `json:"slope"`
	PA2   *WireEstimate `json:"pa2"`
}

// SchildGlobal is the global fit; PKB is nil when s = 1 is rejected.
type SchildGlobal struct {
	PA2         *WireEstimate      `json:"pa2"`
	Slope       *WireEstimate      `json:"slope"`
	PKB         *WireEstimate      `json:"pkb"`
	SlopeUnityP wire.Num           `json:"slope_unity_p"`
	Shared      map[string]float64 `json:"shared"`
	Bootstrap   *BootstrapInfo     `json:"bootstrap,omitempty"`
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

// BootstrapInfo describes the resampling behind the global intervals.
type BootstrapInfo struct {
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
	wire.FitResult
}

// schildResponse turns an analysis into its wire form.
func schildResponse(r *schild.Result, curves []schild.Curve, seed uint64) SchildResponse {
	out := SchildResponse{Competitive: r.Competitive, Flags: append([]string{}, r.Flags...), Withheld: r.Withheld,
		Confidence: r.Confidence, Caution: wire.Caution}
	for _, d := range r.DoseRatios {
		out.DoseRatios = append(out.DoseRatios, SchildDoseRatio{d.AntagonistConc, wire.Num(d.DoseRatio.Estimate), [2]wire.Num{wire.Num(d.DoseRatio.Lo), wire.Num(d.DoseRatio.Hi)}})
	}
	if reg := r.Regression; reg != nil && r.Competitive {
		out.Regression = &SchildRegression{wireEst(reg.SlopeCI(r.Confidence), true), wireEst(reg.PA2CI(r.Confidence), false)}
	}
	if g := r.Global; g != nil {
		gl := &SchildGlobal{PA2: wireEst(g.PA2, false), Slope: wireEst(g.Slope, true), SlopeUnityP: wire.Num(g.SlopeUnityP), Shared: g.Shared}
		if g.PKBReported {
			gl.PKB = wireEst(g.PKB, false)
		}
		if g.Resamples > 0 {
			gl.Bootstrap = &BootstrapInfo{Resamples: g.Resamples, Failed: g.Failed, Seed: seed, Scheme: "residual within curves", Interval: "percentile"}
		}
		out.Global = gl
	}
	if cp := r.ChengPrusoff; cp != nil {
		out.ChengPrusoff = &SchildChengPrusoff{cp.AgonistConc, cp.IC50, -math.Log10(cp.IC50), cp.KB, cp.PKB,
			"IC50 of the inhibition of the control's EC80 response; KB by the functional Cheng–Prusoff correction, which assumes competition with the agonist — for an agonist-independent block the pIC50 is the better estimate"}
	}
	for i, c := range r.Curves {
		out.Curves = append(out.Curves, SchildCurveResult{AntagonistConc: curves[i].AntagonistConc, FitResult: wire.FromFit(c)})
	}
	return out
}

// createSchild is POST /v1/schild.
func (s *Server) createSchild(c *gin.Context) {
	var req SchildRequest
	body, ok := s.readJSON(c, &req)
	if !ok {
		return
	}
	curves, set, err := validateSchild(&req)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	set.Workers = s.cfg.FitWorkers
	res, err := schild.Analyze(c.Request.Context(), curves, set)
	if err != nil {
		var ce *schild.CurveError
		if errors.As(err, &ce) {
			s.writeProblem(c, invalidField(fmt.Sprintf("/curves/%d", ce.Index), "%v", ce.Err))
			return
		}
		if errors.Is(err, fit.ErrInvalidInput) {
			s.writeProblem(c, invalidField("/curves", "%v", err))
			return
		}
		s.writeProblem(c, invalidField("/curves", "the analysis failed: %v", err))
		return
	}
	out := schildResponse(res, curves, set.Seed)
	out.AgonistID, out.AntagonistID = req.AgonistID, req.AntagonistID
	if req.Store != nil && !*req.Store {
		b, _ := json.Marshal(out)
		s.respond(c, http.StatusOK, "application/json", b, nil)
		return
	}
	now := s.now()
	out.ID, out.CreatedAt = s.newID(), now.Format(time.RFC3339Nano)
	b, _ := json.Marshal(out)
	sum := sha256.Sum256(body)
	in, _ := json.Marshal(req)
	run := &db.SchildRun{ID: out.ID, CreatedAt: now, SubmittedBy: actor(c), AgonistID: req.AgonistID, AntagonistID: req.AntagonistID,
		EngineVersion: fit.EngineVersion, InputSHA256: hex.EncodeToString(sum[:]), Input: in, Result: b}
	ctx := c.Request.Context()
	c.Header("Location", "/v1/schild/"+out.ID)
	s.respond(c, http.StatusCreated, "application/json", b, func(w db.Writer) error {
		if err := w.InsertSchildRun(ctx, run); err != nil {
			return err
		}
		return w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: run.SubmittedBy, Action: "schild.create", Target: run.ID})
	})
}

// validateSchild converts a request; errors point at the field.
func validateSchild(req *SchildRequest) ([]schild.Curve, *schild.Settings, error) {
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		return nil, nil, invalidField("/conc_unit", "%v", err)
	}
	if len(req.Curves) < 2 || len(req.Curves) > 50 {
		return nil, nil, invalidField("/curves", "give the control curve (antagonist_conc 0) and 1–49 shifted curves")
	}
	var curves []schild.Curve
	for i, sc := range req.Curves {
		if sc.AntagonistConc == nil || !(*sc.AntagonistConc >= 0) || math.IsInf(*sc.AntagonistConc, 0) {
			return nil, nil, invalidField(fmt.Sprintf("/curves/%d/antagonist_conc", i), "antagonist_conc is required, ≥ 0 (0 for the control)")
		}
		c := schild.Curve{AntagonistConc: unit.ToMolar(*sc.AntagonistConc)}
		if len(sc.Points) < 5 {
			return nil, nil, invalidField(fmt.Sprintf("/curves/%d/points", i), "a curve needs at least 5 points")
		}
		for k, p := range sc.Points {
			if p.Conc == nil || p.Response == nil {
				return nil, nil, invalidField(fmt.Sprintf("/curves/%d/points/%d", i, k), "conc and response are required")
			}
			if !(*p.Conc >= 0) || math.IsInf(*p.Conc, 0) {
				return nil, nil, invalidField(fmt.Sprintf("/curves/%d/points/%d/conc", i, k), "concentration must be ≥ 0")
			}
			c.Points = append(c.Points, fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response})
		}
		curves = append(curves, c)
	}
	set := &schild.Settings{Confidence: req.Confidence}
	if req.Confidence != 0 && !(req.Confidence > 0 && req.Confidence < 1) {
		return nil, nil, invalidField("/confidence", "confidence must be in (0, 1)")
	}
	if b := req.Bootstrap; b != nil {
		set.Resamples = b.Resamples
		if set.Resamples == 0 {
			set.Resamples = fit.DefaultResamples
		}
		if set.Resamples < 1 || set.Resamples > fit.MaxResamples {
			return nil, nil, invalidField("/bootstrap/resamples", "resamples must be 1–%d", fit.MaxResamples)
		}
		if b.Seed != nil {
			set.Seed = *b.Seed
		}
	}
	return curves, set, nil
}

func (s *Server) getSchild(c *gin.Context) {
	r, err := s.store.SchildRun(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Data(http.StatusOK, "application/json", r.Result)
}

// schildPlot is GET /v1/schild/{id}/plot.svg: the shifted curves on the
// left, the Schild plot on the right.
func (s *Server) schildPlot(c *gin.Context) {
	r, err := s.store.SchildRun(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	var res SchildResponse
	if err := json.Unmarshal(r.Result, &res); err != nil {
		s.writeProblem(c, fmt.Errorf("stored schild %s: %w", r.ID, err))
		return
	}
	var req SchildRequest
	json.Unmarshal(r.Input, &req)
	unit, _ := ingest.ParseUnit(req.ConcUnit)
	fig := &plot.Schild{Title: "Schild analysis " + r.ID, Footnote: wire.Caution}
	for i, sc := range req.Curves {
		if i >= len(res.Curves) {
			break
		}
		ser := plot.Series{Label: fmt.Sprintf("[B] %.3g M", unit.ToMolar(*sc.AntagonistConc))}
		for _, p := range sc.Points {
			ser.PointConc = append(ser.PointConc, unit.ToMolar(*p.Conc))
			ser.PointResp = append(ser.PointResp, *p.Response)
		}
		cr := res.Curves[i]
		if cr.Status == fit.StatusConverged {
			theta := make([]float64, len(cr.Params))
			for j, p := range cr.Params {
				theta[j] = float64(p.Estimate)
			}
			lo, hi := math.Inf(1), math.Inf(-1)
			for _, x := range ser.PointConc {
				if x > 0 {
					lo, hi = math.Min(lo, x), math.Max(hi, x)
				}
			}
			for k := 0; k < 120; k++ {
				x := math.Pow(10, math.Log10(lo)-0.3+(math.Log10(hi)-math.Log10(lo)+0.6)*float64(k)/119)
				ser.LineConc = append(ser.LineConc, x)
				ser.Line = append(ser.Line, fit.Hill.Value(theta, x))
			}
		}
		fig.Curves = append(fig.Curves, ser)
	}
	for _, d := range res.DoseRatios {
		if float64(d.DoseRatio) > 1 {
			fig.SchildX = append(fig.SchildX, math.Log10(d.AntagonistConc))
			fig.SchildY = append(fig.SchildY, math.Log10(float64(d.DoseRatio)-1))
		}
	}
	sort.Float64s(fig.SchildX)
	if res.Regression != nil {
		fig.Slope, fig.Intercept = float64(res.Regression.Slope.Estimate), float64(res.Regression.PA2.Estimate)*float64(res.Regression.Slope.Estimate)
		fig.HasLine = true
	}
	fig.Subtitle = "competitive"
	if !res.Competitive {
		fig.Subtitle = "not competitive: " + fmt.Sprint(res.Flags)
	} else if res.Global != nil {
		fig.Subtitle = fmt.Sprintf("global fit: pA2 %.2f, slope %.2f", float64(res.Global.PA2.Estimate), float64(res.Global.Slope.Estimate))
		if res.Global.PKB != nil {
			fig.Subtitle += fmt.Sprintf(", pKB %.2f", float64(res.Global.PKB.Estimate))
		}
	}
	c.Status(http.StatusOK)
	c.Header("Content-Type", "image/svg+xml")
	fig.Write(c.Writer)
}

// SchildFromCSV runs a Schild analysis offline from a CSV with the columns
// antagonist_conc, conc and response (in unit), as `sluice schild` does.
func SchildFromCSV(r io.Reader, unit ingest.Unit, set *schild.Settings) (*SchildResponse, error) {
	curves, err := ingest.ReadSchildCSV(r, unit)
	if err != nil {
		return nil, err
	}
	res, err := schild.Analyze(context.Background(), curves, set)
	if err != nil {
		return nil, err
	}
	out := schildResponse(res, curves, set.Seed)
	return &out, nil
}
