package service

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"net/http"
	"slices"
	"strings"

	"sluice/api/ingest"
	"sluice/api/plot"
	"sluice/api/wire"
	"sluice/fit"
	"sluice/fit/cost"
	"sluice/fit/membrane"
)

// MaxAgonistConcs bounds agonist_conc.
const MaxAgonistConcs = 10000

// potentialModel is a validated potential request.
type potentialModel struct {
	rest     []membrane.Conductance
	ch       membrane.Channel
	nernst   map[string]float64
	po       func(float64) float64
	draws    []func(float64) float64
	concs    []float64 // agonist_conc, molar
	conf     float64
	cautions []string
	// flags and notes warn about the request's concentrations or curve
	// (fit.FlagImplausibleConc), as a fit's do.
	flags, notes []string
	// agonist and channel name them in the figure's title; curveID is the
	// stored fit, if any.
	agonist, channel, curveID string
}

// flag adds a flag (once) with its note.
func (m *potentialModel) flag(f, note string) {
	if !slices.Contains(m.flags, f) {
		m.flags = append(m.flags, f)
	}
	m.notes = append(m.notes, note)
}

func finiteNum(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// potentialCell builds the request's cell (a preset overridden field by
// field, or every field) and has membrane validate it.
func potentialCell(req *wire.PotentialRequest, m *potentialModel) (membrane.Cell, error) {
	cell := membrane.Cell{Ions: membrane.Ions{}, Resting: map[string]float64{}}
	if req.Cell.Preset != "" {
		p, ok := membrane.Presets[req.Cell.Preset]
		if !ok {
			return cell, Invalid("/cell/preset", "unknown preset %q (want neuron or muscle)", req.Cell.Preset)
		}
		cell.TempC = p.TempC
		for k, v := range p.Ions {
			cell.Ions[k] = v
		}
		for k, v := range p.Resting {
			cell.Resting[k] = v
		}
		m.cautions = append(m.cautions, "The "+req.Cell.Preset+" preset uses textbook concentrations and illustrative "+
			"resting conductances (typical textbook values, not a measured cell); enter measured values for a real cell.")
	}
	if t := req.Cell.TemperatureC; t != nil {
		cell.TempC = *t
	} else if req.Cell.Preset == "" {
		return cell, Invalid("/cell/temperature_c", "temperature_c is required without a preset")
	}
	for name, ion := range req.Cell.Ions {
		cell.Ions[name] = membrane.Ion{Name: name, Valence: membrane.Valences[name], Out: ion.Out, In: ion.In}
	}
	for name, g := range req.Cell.RestingConductanceNS {
		cell.Resting[name] = g
	}
	if err := cell.Validate(); err != nil {
		ce := err.(*membrane.CellError)
		ptr := "/cell"
		for _, tok := range strings.SplitN(ce.Field, ".", 2) {
			ptr += "/" + EscapePointer(tok)
		}
		return cell, Invalid(ptr, "%v", ce.Err)
	}
	return cell, nil
}

// potentialChannel checks the channel; its reversal potential is given or
// comes from permeabilities by GHK.
func potentialChannel(req *wire.PotentialRequest, cell membrane.Cell, m *potentialModel) error {
	ch := req.Channel
	if !finiteNum(ch.Count) || ch.Count <= 0 {
		return Invalid("/channel/count", "count must be > 0")
	}
	if !finiteNum(ch.ConductancePS) || ch.ConductancePS <= 0 || ch.ConductancePS > 1000 {
		return Invalid("/channel/conductance_ps", "conductance must be > 0 and ≤ 1000 pS")
	}
	if !finiteNum(ch.MgMM) || ch.MgMM < 0 || ch.MgMM > 100 {
		return Invalid("/channel/mg_mm", "Mg²⁺ must be 0–100 mM")
	}
	m.ch = membrane.Channel{Count: ch.Count, ConductancePS: ch.ConductancePS, MgOut: ch.MgMM}
	switch {
	case ch.ReversalMV != nil && ch.Permeability != nil:
		return Invalid("/channel", "give reversal_mv or permeability, not both")
	case ch.ReversalMV != nil:
		if !finiteNum(*ch.ReversalMV) || math.Abs(*ch.ReversalMV) > 300 {
			return Invalid("/channel/reversal_mv", "reversal potential must be within ±300 mV")
		}
		m.ch.Reversal = *ch.ReversalMV
	case ch.Permeability != nil:
		for name, p := range ch.Permeability {
			ptr := "/channel/permeability/" + EscapePointer(name)
			if _, ok := membrane.Valences[name]; !ok {
				return Invalid(ptr, "unknown ion %q", name)
			}
			if !finiteNum(p) || p < 0 {
				return Invalid(ptr, "permeability must be ≥ 0")
			}
			if _, ok := cell.Ions[name]; !ok && p > 0 {
				return Invalid(ptr, "no concentrations for %s in cell.ions", name)
			}
		}
		v, err := membrane.GHKVoltage(cell.Ions, ch.Permeability, cell.TempC)
		if err != nil {
			return Invalid("/channel/permeability", "%v", err)
		}
		m.ch.Reversal = v
	default:
		return Invalid("/channel", "give reversal_mv or permeability")
	}
	if m.ch.MgOut > 0 {
		m.cautions = append(m.cautions, "The Mg²⁺ block uses B(V) = 1/(1 + [Mg]/3.57·e^(−0.062·V)) "+
			"(Jahr & Stevens 1990, J Neurosci 10:3178).")
	}
	return nil
}

// validatePotential checks everything but a stored curve; errors point at
// the field.
func validatePotential(req *wire.PotentialRequest) (*potentialModel, error) {
	m := &potentialModel{}
	cell, err := potentialCell(req, m)
	if err != nil {
		return nil, err
	}
	m.rest = cell.RestingConductances()
	m.nernst = map[string]float64{}
	for _, ion := range cell.Ions.Sorted() {
		m.nernst[ion.Name] = membrane.Nernst(ion.Valence, ion.Out, ion.In, cell.TempC)
	}
	if err := potentialChannel(req, cell, m); err != nil {
		return nil, err
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err == nil {
		unit, err = ingest.RequireUnit(unit, "conc_unit")
	}
	if err != nil {
		return nil, Invalid("/conc_unit", "%v", err)
	}
	if len(req.AgonistConc) == 0 || len(req.AgonistConc) > MaxAgonistConcs {
		return nil, Invalid("/agonist_conc", "give 1–%d concentrations (in conc_unit)", MaxAgonistConcs)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, c := range req.AgonistConc {
		// A finite number in a unit can still overflow in molar (pM
		// does not, but the check costs nothing).
		if c == nil || !finiteNum(*c) || *c < 0 || !finiteNum(unit.ToMolar(*c)) {
			return nil, Invalid(fmt.Sprintf("/agonist_conc/%d", i), "concentration must be a finite number ≥ 0 %s", unit)
		}
		cm := unit.ToMolar(*c)
		m.concs = append(m.concs, cm)
		if cm > 0 {
			lo, hi = math.Min(lo, cm), math.Max(hi, cm)
		}
	}
	if hi > 0 {
		if note := fit.ImplausibleConcs(lo, hi); note != "" {
			m.flag(fit.FlagImplausibleConc, note)
		}
	}
	if err := errors.Join(checkText("/agonist_id", req.AgonistID), checkText("/channel/name", req.Channel.Name)); err != nil {
		return nil, err
	}
	m.agonist, m.channel = req.AgonistID, req.Channel.Name
	if m.channel == "" {
		m.channel = fmt.Sprintf("%g × %g pS channels", req.Channel.Count, req.Channel.ConductancePS)
	}
	switch {
	case req.CurveID != "" && req.Hill != nil:
		return nil, Invalid("/hill", "give curve_id or hill, not both")
	case req.Hill != nil:
		h := req.Hill
		if req.PoMax != nil {
			return nil, Invalid("/po_max", "po_max is for curve_id; hill carries its own (hill.po_max)")
		}
		if h.LogEC50 == nil || !finiteNum(*h.LogEC50) || *h.LogEC50 < -15 || *h.LogEC50 > 1 {
			return nil, Invalid("/hill/log_ec50", "log_ec50 (log10 molar) is required, −15 to 1")
		}
		if h.Hill == nil || !finiteNum(*h.Hill) || *h.Hill <= 0 || *h.Hill > 20 {
			return nil, Invalid("/hill/hill", "hill is required, > 0 (an agonist curve) and ≤ 20")
		}
		if h.PoMax == nil || !(*h.PoMax > 0) || *h.PoMax > 1 {
			return nil, Invalid("/hill/po_max", "po_max is required, in (0, 1]")
		}
		r := fit.Hill.Roles()
		theta := make([]float64, len(fit.Hill.Params()))
		theta[r.Bottom], theta[r.Top], theta[r.LogEC50], theta[r.Hill] = 0, *h.PoMax, *h.LogEC50, *h.Hill
		m.po = func(c float64) float64 { return fit.Hill.Value(theta, c) }
		if m.agonist == "" {
			m.agonist = curveName(*h.LogEC50, *h.Hill)
		}
		if note := fit.ImplausibleEC50(math.Pow(10, *h.LogEC50)); note != "" {
			m.flag(fit.FlagImplausibleConc, note)
		}
	case req.CurveID != "":
		if req.PoMax != nil && (!(*req.PoMax > 0) || *req.PoMax > 1) {
			return nil, Invalid("/po_max", "po_max must be in (0, 1]")
		}
	default:
		return nil, Invalid("/hill", "give curve_id or hill")
	}
	if req.ThresholdMV != nil && (!finiteNum(*req.ThresholdMV) || math.Abs(*req.ThresholdMV) > 300) {
		return nil, Invalid("/threshold_mv", "threshold must be within ±300 mV")
	}
	return m, nil
}

// curveName names an agonist known by its curve alone: "agonist (EC50
// 10 µM, nH 1.5)".
func curveName(logEC50, hill float64) string {
	return fmt.Sprintf("agonist (EC50 %s, nH %.3g)", molarText(math.Pow(10, logEC50)), hill)
}

// molarText writes a molar concentration to three significant digits in
// the unit that gives it one to three digits before the point: 3e-5 is
// "30 µM", 9.9996e-4 "1 mM" (not "1e+03 µM").
func molarText(c float64) string {
	for _, u := range []struct {
		name   string
		factor float64
	}{{"M", 1}, {"mM", 1e-3}, {"µM", 1e-6}, {"nM", 1e-9}, {"pM", 1e-12}} {
		if c >= u.factor*(1-5e-4) {
			return fmt.Sprintf("%.3g %s", c/u.factor, u.name)
		}
	}
	return fmt.Sprintf("%.3g fM", c/1e-15)
}

// nameCurve names the agonist of a stored curve (its compound, else its
// fitted EC50 and slope) and carries its implausible-concentration flag
// over to the prediction.
func nameCurve(req *wire.PotentialRequest, m *potentialModel, lc *loadedCurve) {
	res := &lc.sf.Result
	m.curveID = req.CurveID
	if m.agonist == "" {
		m.agonist = res.CompoundID
	}
	if m.agonist == "" {
		theta := res.Params.Estimates()
		m.agonist = curveName(lc.model.LogEC50(theta), lc.model.HillSlope(theta))
	}
	if slices.Contains(res.Flags, fit.FlagImplausibleConc) {
		m.flag(fit.FlagImplausibleConc, "the stored fit (curve_id) is flagged "+fit.FlagImplausibleConc+
			": its concentrations or EC50 lie outside the plausible range; check the unit it was sent in")
	}
}

// useCurve sets the model's open fraction from a stored curve, scaled to
// the request's po_max.
func useCurve(req *wire.PotentialRequest, m *potentialModel, sc *storedCurve) {
	scale := 1.0
	if req.PoMax != nil {
		scale = *req.PoMax
	} else {
		m.cautions = append(m.cautions, "po_max not given: the fitted maximum is taken as P_open = 1.")
	}
	po := sc.po
	m.po = func(c float64) float64 { return scale * po(c) }
	for _, d := range sc.draws {
		m.draws = append(m.draws, func(c float64) float64 { return scale * d(c) })
	}
	m.conf = sc.conf
}

// potentialWork is the cost of predicting at the request's concentrations
// with draws bootstrap draws (membrane.Cost); with the figure, V and its
// band are also found on the figure's grid, at most potentialGridPoints
// more concentrations than the request's (potentialGrid):
//
//	W = membrane.Cost(n + figure·(n + potentialGridPoints), draws, Mg)
func potentialWork(req *wire.PotentialRequest, draws int, figure bool) cost.Work {
	n := len(req.AgonistConc)
	if figure {
		n += len(req.AgonistConc) + potentialGridPoints
	}
	return membrane.Cost(n, draws, req.Channel.MgMM > 0)
}

// predictPotential computes the prediction of a validated model: V and ΔV
// at each concentration, their band over the bootstrap draws, and the
// threshold concentration.
func predictPotential(ctx context.Context, req *wire.PotentialRequest, m *potentialModel, workers int) (*wire.PotentialResponse, error) {
	pred, err := membrane.Predict(ctx, m.rest, m.ch, m.po, m.concs)
	if err != nil {
		return nil, err
	}
	out := &wire.PotentialResponse{ConcUnit: ingest.Molar.String(), RestMV: pred.Rest, NernstMV: m.nernst,
		ChannelReversalMV: m.ch.Reversal, Multistable: pred.Multistable,
		Flags: append([]string{}, m.flags...), Notes: append([]string{}, m.notes...)}
	for _, p := range pred.Points {
		pp := wire.PotentialPoint{AgonistConc: p.Conc, OpenFraction: p.OpenFraction, GLigandNS: p.G, VMV: p.V, DeltaMV: p.Delta}
		if m.ch.MgOut > 0 {
			b := p.Block
			pp.MgUnblocked = &b
		}
		out.Points = append(out.Points, pp)
	}
	if len(m.draws) > 0 {
		// The percentile interval of V(c) over the bootstrap parameter
		// draws of the stored fit.
		los, his, err := membrane.Band(ctx, m.rest, m.ch, m.draws, m.concs, m.conf, workers)
		if err != nil {
			return nil, err
		}
		for i := range out.Points {
			lo, hi := los[i], his[i]
			out.Points[i].CI = &wire.PotentialCI{Confidence: m.conf, VMV: [2]float64{lo, hi}, DeltaMV: [2]float64{lo - pred.Rest, hi - pred.Rest}}
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
	cautions := m.cautions
	if pred.Multistable {
		cautions = append(cautions, "With the Mg²⁺ block the cell has more than one steady state at some concentrations; "+
			"the state reached by raising the concentration from rest is reported.")
	}
	out.Cautions = append([]string{wire.Caution, "Steady-state chord-conductance estimate: no pumps, no cable " +
		"properties, no voltage-gated channels; not a clinical or dosing tool."}, cautions...)
	return out, nil
}

// PredictPotential is `sluice potential`: the prediction of POST
// /v1/potential for a request with its own Hill curve (no stored fit),
// with the same validation and numbers, and when figure is true the same
// figure as ?format=svg, within the hard limit of budget (zero means
// DefaultHardLimit). A validation error is a *Error naming the field.
func PredictPotential(ctx context.Context, req *wire.PotentialRequest, budget Budget, workers int, figure bool) (*wire.PotentialResponse, *plot.Curve, error) {
	b, err := budget.resolve()
	if err != nil {
		return nil, nil, err
	}
	m, err := validatePotential(req)
	if err != nil {
		return nil, nil, err
	}
	if req.CurveID != "" {
		return nil, nil, Invalid("/curve_id", "stored curves need the service; give hill here")
	}
	if err := b.admit(potentialWork(req, 0, figure), "/agonist_conc"); err != nil {
		return nil, nil, err
	}
	out, err := predictPotential(ctx, req, m, workers)
	if err != nil || !figure {
		return out, nil, err
	}
	fig, err := potentialFigure(ctx, req, m, out, workers)
	return out, fig, err
}

// Potential is POST /v1/potential: the steady membrane potential across
// agonist concentrations, with a band when the curve is a stored,
// bootstrapped fit; as JSON, or as the figure of V and ΔV when svg. It
// stores nothing, not even its reply under its key (calculate); a
// prediction over the synchronous budget is queued (202).
func (s *Service) Potential(ctx context.Context, who Caller, idem *Idem, req *wire.PotentialRequest, svg bool) (*Reply, error) {
	return s.calculate(ctx, who, idem, func(ctx context.Context) (plan, error) {
		m, lc, w, err := s.preparePotential(ctx, req, svg)
		if err != nil {
			return plan{}, err
		}
		if w > s.budget.Sync {
			return s.queue(who, analysisPotential, &queuedRequest{Potential: req, SVG: svg}, w)
		}
		r, err := s.runPotential(ctx, req, m, lc, svg)
		return plan{reply: r}, err
	})
}

// preparePotential validates a potential request, reads its stored curve
// and checks the work (membrane.Cost, with the figure's grid when figure,
// plus regenerating the curve's draws when they were not stored) against
// the hard limit.
func (s *Service) preparePotential(ctx context.Context, req *wire.PotentialRequest, figure bool) (*potentialModel, *loadedCurve, cost.Work, error) {
	m, err := validatePotential(req)
	if err != nil {
		return nil, nil, 0, err
	}
	var lc *loadedCurve
	w := potentialWork(req, 0, figure)
	if req.CurveID != "" {
		if lc, err = s.loadCurve(ctx, req.CurveID); err != nil {
			return nil, nil, 0, err
		}
		nameCurve(req, m, lc)
		w = lc.redraw + potentialWork(req, lc.draws, figure)
	}
	if err := s.budget.admit(w, "/agonist_conc"); err != nil {
		return nil, nil, 0, err
	}
	return m, lc, w, nil
}

// runPotential computes a prepared request's reply.
func (s *Service) runPotential(ctx context.Context, req *wire.PotentialRequest, m *potentialModel, lc *loadedCurve, svg bool) (*Reply, error) {
	if lc != nil {
		sc, err := s.drawCurve(ctx, lc)
		if err != nil {
			return nil, err
		}
		useCurve(req, m, sc)
	}
	out, err := predictPotential(ctx, req, m, s.fitWorkers)
	if err != nil {
		return nil, err
	}
	if !svg {
		return jsonReply(http.StatusOK, out, "")
	}
	fig, err := potentialFigure(ctx, req, m, out, s.fitWorkers)
	if err != nil {
		return nil, err
	}
	var buf bytes.Buffer
	if err := fig.Write(&buf); err != nil {
		return nil, fmt.Errorf("potential figure: %w", err)
	}
	return &Reply{Status: http.StatusOK, ContentType: "image/svg+xml", Body: buf.Bytes()}, nil
}
