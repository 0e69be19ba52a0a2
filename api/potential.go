package api

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"net/http"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/api/plot"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
	"sluice/fit"
	"sluice/fit/membrane"
)

// PotentialRequest is the body of POST /v1/potential. Ion concentrations
// are mM, agonist concentrations molar, conductances nS (channels pS).
type PotentialRequest struct {
	// CurveID names a stored fit; or Hill gives the curve directly.
	CurveID string  `json:"curve_id,omitempty"`
	Hill    *HillIn `json:"hill,omitempty"`
	// PoMax is the open probability at the fitted maximum, for CurveID
	// (Hill carries its own); default 1.
	PoMax       *float64  `json:"po_max,omitempty"`
	AgonistConc []float64 `json:"agonist_conc"`
	Channel     ChannelIn `json:"channel"`
	Cell        CellIn    `json:"cell"`
	ThresholdMV *float64  `json:"threshold_mv,omitempty"`
}

// HillIn is a Hill curve for the open fraction.
type HillIn struct {
	LogEC50 *float64 `json:"log_ec50"`
	Hill    *float64 `json:"hill"`
	PoMax   *float64 `json:"po_max"`
}

// ChannelIn is the ligand-gated channel.
type ChannelIn struct {
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

// PotentialResponse is the answer of POST /v1/potential.
type PotentialResponse struct {
	RestMV            float64            `json:"rest_mv"`
	NernstMV          map[string]float64 `json:"nernst_mv"`
	ChannelReversalMV float64            `json:"channel_reversal_mv"`
	Points            []PotentialPoint   `json:"points"`
	ThresholdCrossed  *float64           `json:"threshold_crossed_at,omitempty"`
	Multistable       bool               `json:"multistable"`
	Cautions          []string           `json:"cautions"`
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

// MaxAgonistConcs bounds agonist_conc.
const MaxAgonistConcs = 10000

// curveSource gives the open-fraction curve of a stored fit: the fitted
// model's normalised response, and its bootstrap draws when it has some.
type curveSource func(id string) (po func(float64) float64, draws []func(float64) float64, conf float64, err error)

// potentialModel is a validated request.
type potentialModel struct {
	rest   []membrane.Conductance
	ch     membrane.Channel
	po     func(float64) float64
	draws  []func(float64) float64
	conf   float64
	nernst map[string]float64
}

func finiteNum(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// buildPotential validates a request; errors point at the field.
func buildPotential(req *PotentialRequest, curves curveSource) (*potentialModel, []string, error) {
	var cautions []string
	m := &potentialModel{}
	// The cell.
	cell := membrane.Cell{Ions: membrane.Ions{}, Resting: map[string]float64{}}
	if req.Cell.Preset != "" {
		p, ok := membrane.Presets[req.Cell.Preset]
		if !ok {
			return nil, nil, invalidField("/cell/preset", "unknown preset %q (want neuron or muscle)", req.Cell.Preset)
		}
		cell.TempC = p.TempC
		for k, v := range p.Ions {
			cell.Ions[k] = v
		}
		for k, v := range p.Resting {
			cell.Resting[k] = v
		}
		cautions = append(cautions, "The "+req.Cell.Preset+" preset uses textbook concentrations and illustrative "+
			"resting conductances (some from memory); enter measured values for a real cell.")
	}
	if t := req.Cell.TemperatureC; t != nil {
		if !finiteNum(*t) || *t < -5 || *t > 60 {
			return nil, nil, invalidField("/cell/temperature_c", "temperature must be −5 to 60 °C")
		}
		cell.TempC = *t
	} else if req.Cell.Preset == "" {
		return nil, nil, invalidField("/cell/temperature_c", "temperature_c is required without a preset")
	}
	for name, ion := range req.Cell.Ions {
		z, ok := membrane.Valences[name]
		if !ok {
			return nil, nil, invalidField("/cell/ions/"+escapePointer(name), "unknown ion %q (want k, na, cl or ca)", name)
		}
		if !(ion.Out > 0) || !(ion.In > 0) || !finiteNum(ion.Out) || !finiteNum(ion.In) {
			return nil, nil, invalidField("/cell/ions/"+escapePointer(name), "out and in must be > 0 mM")
		}
		cell.Ions[name] = membrane.Ion{Name: name, Valence: z, Out: ion.Out, In: ion.In}
	}
	for name, g := range req.Cell.RestingConductanceNS {
		ptr := "/cell/resting_conductance_ns/" + escapePointer(name)
		if !finiteNum(g) || g < 0 {
			return nil, nil, invalidField(ptr, "conductance must be ≥ 0 nS")
		}
		if _, ok := cell.Ions[name]; !ok && g > 0 {
			return nil, nil, invalidField(ptr, "no concentrations for %s in cell.ions", name)
		}
		cell.Resting[name] = g
	}
	m.rest = cell.RestingConductances()
	if len(m.rest) == 0 {
		return nil, nil, invalidField("/cell/resting_conductance_ns", "at least one resting conductance must be > 0")
	}
	m.nernst = map[string]float64{}
	for _, ion := range cell.Ions.Sorted() {
		m.nernst[ion.Name] = membrane.Nernst(ion.Valence, ion.Out, ion.In, cell.TempC)
	}
	// The channel.
	ch := req.Channel
	if !finiteNum(ch.Count) || ch.Count <= 0 {
		return nil, nil, invalidField("/channel/count", "count must be > 0")
	}
	if !finiteNum(ch.ConductancePS) || ch.ConductancePS <= 0 || ch.ConductancePS > 1000 {
		return nil, nil, invalidField("/channel/conductance_ps", "conductance must be > 0 and ≤ 1000 pS")
	}
	if !finiteNum(ch.MgMM) || ch.MgMM < 0 || ch.MgMM > 100 {
		return nil, nil, invalidField("/channel/mg_mm", "Mg²⁺ must be 0–100 mM")
	}
	m.ch = membrane.Channel{Count: ch.Count, ConductancePS: ch.ConductancePS, MgOut: ch.MgMM}
	switch {
	case ch.ReversalMV != nil && ch.Permeability != nil:
		return nil, nil, invalidField("/channel", "give reversal_mv or permeability, not both")
	case ch.ReversalMV != nil:
		if !finiteNum(*ch.ReversalMV) || math.Abs(*ch.ReversalMV) > 300 {
			return nil, nil, invalidField("/channel/reversal_mv", "reversal potential must be within ±300 mV")
		}
		m.ch.Reversal = *ch.ReversalMV
	case ch.Permeability != nil:
		for name, p := range ch.Permeability {
			ptr := "/channel/permeability/" + escapePointer(name)
			if _, ok := membrane.Valences[name]; !ok {
				return nil, nil, invalidField(ptr, "unknown ion %q", name)
			}
			if !finiteNum(p) || p < 0 {
				return nil, nil, invalidField(ptr, "permeability must be ≥ 0")
			}
			if _, ok := cell.Ions[name]; !ok && p > 0 {
				return nil, nil, invalidField(ptr, "no concentrations for %s in cell.ions", name)
			}
		}
		v, err := membrane.GHKVoltage(cell.Ions, ch.Permeability, cell.TempC)
		if err != nil {
			return nil, nil, invalidField("/channel/permeability", "%v", err)
		}
		m.ch.Reversal = v
	default:
		return nil, nil, invalidField("/channel", "give reversal_mv or permeability")
	}
	if m.ch.MgOut > 0 {
		cautions = append(cautions, "The Mg²⁺ block uses B(V) = 1/(1 + [Mg]/3.57·e^(−0.062·V)) "+
			"(Jahr & Stevens 1990; constants from memory).")
	}
	// The agonist concentrations.
	if len(req.AgonistConc) == 0 || len(req.AgonistConc) > MaxAgonistConcs {
		return nil, nil, invalidField("/agonist_conc", "give 1–%d concentrations (molar)", MaxAgonistConcs)
	}
	for i, c := range req.AgonistConc {
		if !finiteNum(c) || c < 0 {
			return nil, nil, invalidField(fmt.Sprintf("/agonist_conc/%d", i), "concentration must be a finite number ≥ 0 M")
		}
	}
	// The curve.
	switch {
	case req.CurveID != "" && req.Hill != nil:
		return nil, nil, invalidField("/hill", "give curve_id or hill, not both")
	case req.Hill != nil:
		h := req.Hill
		if h.LogEC50 == nil || !finiteNum(*h.LogEC50) || *h.LogEC50 < -15 || *h.LogEC50 > 1 {
			return nil, nil, invalidField("/hill/log_ec50", "log_ec50 (log10 molar) is required, −15 to 1")
		}
		if h.Hill == nil || !finiteNum(*h.Hill) || *h.Hill <= 0 || *h.Hill > 20 {
			return nil, nil, invalidField("/hill/hill", "hill is required, > 0 (an agonist curve) and ≤ 20")
		}
		if h.PoMax == nil || !(*h.PoMax > 0) || *h.PoMax > 1 {
			return nil, nil, invalidField("/hill/po_max", "po_max is required, in (0, 1]")
		}
		r := fit.Hill.Roles()
		theta := make([]float64, len(fit.Hill.Params()))
		theta[r.Bottom], theta[r.Top], theta[r.LogEC50], theta[r.Hill] = 0, *h.PoMax, *h.LogEC50, *h.Hill
		m.po = func(c float64) float64 { return fit.Hill.Value(theta, c) }
	case req.CurveID != "":
		if curves == nil {
			return nil, nil, invalidField("/curve_id", "stored curves need the service; give hill here")
		}
		po, draws, conf, err := curves(req.CurveID)
		if err != nil {
			return nil, nil, err
		}
		scale := 1.0
		if req.PoMax != nil {
			if !(*req.PoMax > 0) || *req.PoMax > 1 {
				return nil, nil, invalidField("/po_max", "po_max must be in (0, 1]")
			}
			scale = *req.PoMax
		} else {
			cautions = append(cautions, "po_max not given: the fitted maximum is taken as P_open = 1.")
		}
		m.po = func(c float64) float64 { return scale * po(c) }
		for _, d := range draws {
			m.draws = append(m.draws, func(c float64) float64 { return scale * d(c) })
		}
		m.conf = conf
	default:
		return nil, nil, invalidField("/hill", "give curve_id or hill")
	}
	if req.ThresholdMV != nil && (!finiteNum(*req.ThresholdMV) || math.Abs(*req.ThresholdMV) > 300) {
		return nil, nil, invalidField("/threshold_mv", "threshold must be within ±300 mV")
	}
	return m, cautions, nil
}

// computePotential answers a request (the API and `sluice potential`); the
// band over bootstrap draws runs on workers goroutines (0 means GOMAXPROCS).
func computePotential(ctx context.Context, req *PotentialRequest, curves curveSource, workers int) (*PotentialResponse, error) {
	m, cautions, err := buildPotential(req, curves)
	if err != nil {
		return nil, err
	}
	pred, err := membrane.Predict(ctx, m.rest, m.ch, m.po, req.AgonistConc)
	if err != nil {
		return nil, err
	}
	out := &PotentialResponse{RestMV: pred.Rest, NernstMV: m.nernst, ChannelReversalMV: m.ch.Reversal,
		Multistable: pred.Multistable}
	for _, p := range pred.Points {
		pp := PotentialPoint{AgonistConc: p.Conc, OpenFraction: p.OpenFraction, GLigandNS: p.G, VMV: p.V, DeltaMV: p.Delta}
		if m.ch.MgOut > 0 {
			b := p.Block
			pp.MgUnblocked = &b
		}
		out.Points = append(out.Points, pp)
	}
	if len(m.draws) > 0 {
		// The interval of V(c) over the bootstrap parameter draws
		// (percentile; the draws are reproducible from the fit's seed).
		los, his, err := membrane.Band(ctx, m.rest, m.ch, m.draws, req.AgonistConc, m.conf, workers)
		if err != nil {
			return nil, err
		}
		for i := range out.Points {
			lo, hi := los[i], his[i]
			out.Points[i].CI = &PotentialCI{Confidence: m.conf, VMV: [2]float64{lo, hi}, DeltaMV: [2]float64{lo - pred.Rest, hi - pred.Rest}}
		}
	}
	if req.ThresholdMV != nil {
		c, ok, err := membrane.ThresholdConc(ctx, m.rest, m.ch, m.po, *req.ThresholdMV, 1e-15, 1)
		if err != nil {
			return nil, err
		}
		if ok {
			out.ThresholdCrossed = &c
		}
	}
	if pred.Multistable {
		cautions = append(cautions, "With the Mg²⁺ block the cell has more than one steady state at some concentrations; "+
			"the state reached by raising the concentration from rest is reported.")
	}
	out.Cautions = append([]string{wire.Caution, "Steady-state chord-conductance estimate: no pumps, no cable " +
		"properties, no voltage-gated channels; not a clinical or dosing tool."}, cautions...)
	return out, nil
}

// storedCurve returns a stored fit's open-fraction curve, refitting its
// input with its stored settings and seed to regenerate the bootstrap draws.
func (s *Server) storedCurve(c *gin.Context) curveSource {
	return func(id string) (func(float64) float64, []func(float64) float64, float64, error) {
		run, err := s.store.FitRun(c.Request.Context(), id)
		if errors.Is(err, db.ErrNotFound) {
			return nil, nil, 0, invalidField("/curve_id", "no fit with id %q", id)
		}
		if err != nil {
			return nil, nil, 0, err
		}
		var res wire.StoredFit
		if err := json.Unmarshal(run.Result, &res); err != nil {
			return nil, nil, 0, fmt.Errorf("stored fit %s: %w", id, err)
		}
		if res.Status != fit.StatusConverged {
			return nil, nil, 0, invalidField("/curve_id", "fit %s did not converge (%s)", id, res.Status)
		}
		theta := res.Params.Estimates()
		model := fit.Model(res.Model)
		if model.Top(theta) <= model.Bottom(theta) || (model.Monotone() && model.HillSlope(theta) <= 0) {
			return nil, nil, 0, invalidField("/curve_id", "fit %s is not a rising agonist curve", id)
		}
		po := openFraction(model, theta)
		if res.Bootstrap == nil {
			return po, nil, float64(res.Confidence), nil
		}
		draws, err := s.redrawBootstrap(c.Request.Context(), run, &res)
		if err != nil {
			return nil, nil, 0, err
		}
		var fs []func(float64) float64
		for _, d := range draws {
			if d[0] == d[0] { // failed refits are NaN rows
				fs = append(fs, openFraction(model, d))
			}
		}
		return po, fs, float64(res.Confidence), nil
	}
}

// openFraction is the fitted response normalised to the fitted window,
// (f(c) − bottom)/(top − bottom), clamped to [0, 1].
func openFraction(m fit.Model, theta []float64) func(float64) float64 {
	bottom, top := m.Bottom(theta), m.Top(theta)
	return func(c float64) float64 {
		v := (m.Value(theta, c) - bottom) / (top - bottom)
		return math.Min(math.Max(v, 0), 1)
	}
}

// redrawBootstrap refits a stored run from its input, settings and seed and
// returns the bootstrap draws, checking that the refit reproduces the stored
// estimates.
func (s *Server) redrawBootstrap(ctx context.Context, run *db.FitRun, res *wire.StoredFit) ([][]float64, error) {
	var input struct {
		ConcUnit string         `json:"conc_unit"`
		Points   []wire.PointIn `json:"points"`
	}
	var settings struct {
		Model      string             `json:"model"`
		Fixed      map[string]float64 `json:"fixed"`
		Confidence float64            `json:"confidence"`
		MaxHill    float64            `json:"max_hill"`
		Bootstrap  *wire.BootstrapIn  `json:"bootstrap"`
	}
	if err := json.Unmarshal(run.Input, &input); err != nil {
		return nil, fmt.Errorf("stored input %s: %w", run.ID, err)
	}
	if err := json.Unmarshal(run.Settings, &settings); err != nil {
		return nil, fmt.Errorf("stored settings %s: %w", run.ID, err)
	}
	unit, err := ingest.ParseUnit(input.ConcUnit)
	if err != nil {
		return nil, err
	}
	var curve fit.Curve
	for _, p := range input.Points {
		pt := fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response}
		if p.Weight != nil {
			pt.Weight = *p.Weight
		}
		curve.Points = append(curve.Points, pt)
	}
	r, err := fit.Fit(curve, &fit.Settings{Model: fit.Model(settings.Model), Fixed: settings.Fixed,
		Confidence: settings.Confidence, MaxHill: settings.MaxHill})
	if err != nil {
		return nil, err
	}
	b := settings.Bootstrap
	if b == nil || b.Seed == nil {
		return nil, fmt.Errorf("stored fit %s has no bootstrap seed", run.ID)
	}
	if err := fit.Bootstrap(ctx, r, &fit.BootSettings{Resamples: b.Resamples, Scheme: fit.Scheme(b.Scheme),
		Interval: fit.Interval(b.Interval), Seed: *b.Seed, Workers: s.cfg.FitWorkers}); err != nil {
		return nil, err
	}
	for i, p := range r.Params {
		if p.Estimate != float64(res.Params[i].Estimate) {
			return nil, fmt.Errorf("refitting stored fit %s did not reproduce %s (engine %s, stored by %s)",
				run.ID, p.Name, fit.EngineVersion, run.EngineVersion)
		}
	}
	np := len(r.Params)
	draws := make([][]float64, r.Boot.Resamples)
	for i := range draws {
		draws[i] = r.Boot.Draws[i*np : i*np+np]
	}
	return draws, nil
}

// postPotential is POST /v1/potential; with ?format=svg or Accept:
// image/svg+xml it answers with the plot of V and ΔV instead.
func (s *Server) postPotential(c *gin.Context) {
	var req PotentialRequest
	if _, ok := s.readJSON(c, &req); !ok {
		return
	}
	out, err := computePotential(c.Request.Context(), &req, s.storedCurve(c), s.cfg.FitWorkers)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	if c.Query("format") == "svg" || strings.Contains(c.GetHeader("Accept"), "image/svg+xml") {
		var buf bytes.Buffer
		PotentialPlot(out).Write(&buf)
		s.respond(c, http.StatusOK, "image/svg+xml", buf.Bytes(), nil)
		return
	}
	b, _ := json.Marshal(out)
	s.respond(c, http.StatusOK, "application/json", b, nil)
}

// PotentialPlot is V against log concentration, with its interval when
// there is one, and ΔV on the right-hand axis.
func PotentialPlot(out *PotentialResponse) *plot.Curve {
	fig := &plot.Curve{Title: "Predicted steady membrane potential", YLabel: "V (mV)",
		RightLabel: "ΔV from rest (mV)", RightOffset: out.RestMV, XLabel: "log10 [agonist] (M)",
		Subtitle: fmt.Sprintf("rest %.1f mV · channel reversal %.1f mV", out.RestMV, out.ChannelReversalMV),
		Footnote: strings.Join(out.Cautions[:2], " ")}
	for _, p := range out.Points {
		if p.AgonistConc <= 0 {
			continue
		}
		fig.LineConc = append(fig.LineConc, p.AgonistConc)
		fig.Line = append(fig.Line, p.VMV)
		if p.CI != nil {
			fig.BandLo = append(fig.BandLo, p.CI.VMV[0])
			fig.BandHi = append(fig.BandHi, p.CI.VMV[1])
		}
	}
	if len(fig.BandLo) != len(fig.LineConc) {
		fig.BandLo, fig.BandHi = nil, nil
	}
	return fig
}

// ComputePotential answers a potential request offline (no stored curves):
// the same validation and numbers as POST /v1/potential. A validation
// error's Error() names the field.
func ComputePotential(body []byte) (*PotentialResponse, error) {
	var req PotentialRequest
	if err := decodeJSON(body, &req); err != nil {
		return nil, err
	}
	return computePotential(context.Background(), &req, nil, 0)
}

// FieldOf returns the JSON Pointer an API error points at, if any.
func FieldOf(err error) string {
	var re *service.Error
	if errors.As(err, &re) && len(re.Fields) > 0 {
		return re.Fields[0].Pointer
	}
	return ""
}
