package web

import (
	"bytes"
	"fmt"
	"html/template"
	"maps"
	"math"
	"net/http"
	"net/url"
	"slices"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/api/status"
	"sluice/api/wire"
)

// potentialForm is the calculator's form as the visitor filled it in
// (strings, so that a bad value comes back as typed).
type potentialForm struct {
	Preset, Channel, Count, Conductance, Reversal, Mg string
	// Perm is the relative permeability per ion (ChannelIons order).
	Perm                                   map[string]string
	CurveID, LogEC50, Hill, PoMax, Agonist string
	Concs, Unit, Threshold                 string
}

// potentialDefaults fill an empty form: the demo's neuron example
// (testdata/demo/potential-neuron.json).
var potentialDefaults = potentialForm{Preset: "neuron", Channel: "LGX-7", Count: "200", Conductance: "50",
	Perm: map[string]string{"na": "1", "k": "1"}, LogEC50: "-5", Hill: "1.5", PoMax: "0.8",
	Concs: "0, 0.1, 1, 3, 10, 30, 100, 1000", Unit: "µM", Threshold: "-55"}

// concUnitChoices are the units the form offers for the concentrations.
var concUnitChoices = []string{"M", "mM", "µM", "nM", "pM"}

type potentialData struct {
	Form    potentialForm
	Presets []string
	Ions    []string
	Units   []string
	// Problem is the error next to the form: its words and the fields
	// (JSON Pointers into the request, or form fields) it concerns.
	Problem *formProblem
	Result  *wire.PotentialResponse
	Rows    []potentialRow
	// Nernst are the cell's ions' equilibrium potentials, by name order.
	Nernst []nernstRow
	// Rest and Reversal are the resting and the channel's reversal
	// potentials as shown (mV).
	Rest, Reversal string
	Figure         template.HTML
}

// potentialRow is one concentration's prediction as the table shows it
// (potentials in mV to one decimal; the band is the bootstrap interval of
// a stored fit's prediction).
type potentialRow struct {
	Conc           float64
	Open           float64
	MgUnblocked    *float64
	V, Delta       string
	VBand, DBand   string
	AboveThreshold bool
}

type nernstRow struct {
	Ion string
	E   string
}

type formProblem struct {
	Status int
	Detail string
	Fields []string
}

// potential is GET /potential: the membrane-potential calculator. Without
// a query it shows the form with the demo's example; with one it predicts
// (service.PotentialView: POST /v1/potential's numbers and figure; it
// stores nothing) and shows the figure and a table of V and ΔV. A bad
// value is shown next to the form with the field it concerns (400 for a
// value that is not a number, 422 for one the model refuses).
func (s *Site) potential(c *gin.Context) {
	d := potentialData{Presets: service.CellPresets(), Ions: service.ChannelIons(), Units: concUnitChoices}
	q := c.Request.URL.Query()
	if len(q) == 0 {
		d.Form = potentialDefaults
		s.renderCaution(c, http.StatusOK, "potential", "Membrane potential", d)
		return
	}
	d.Form = readPotentialForm(q, d.Ions)
	err := s.predict(c, &d)
	code := http.StatusOK
	if err != nil {
		code = status.Of(err)
		if code >= 500 {
			s.fail(c, err)
			return
		}
		d.Problem = &formProblem{Status: code, Detail: err.Error()}
		for _, f := range service.FieldsOf(err) {
			d.Problem.Fields = append(d.Problem.Fields, formField(f.Pointer+f.Parameter))
		}
	}
	s.renderCaution(c, code, "potential", "Membrane potential", d)
}

// predict runs the form's request and keeps the answer and its figure.
func (s *Site) predict(c *gin.Context, d *potentialData) error {
	req, err := d.Form.request(d.Ions)
	if err != nil {
		return err
	}
	out, fig, err := s.svc.PotentialView(c.Request.Context(), req)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := fig.Write(&buf); err != nil {
		return fmt.Errorf("potential figure: %w", err)
	}
	d.Result, d.Figure = out, template.HTML(buf.String())
	d.Rest, d.Reversal = mv(out.RestMV), mv(out.ChannelReversalMV)
	for _, p := range out.Points {
		r := potentialRow{Conc: p.AgonistConc, Open: p.OpenFraction, MgUnblocked: p.MgUnblocked, V: mv(p.VMV), Delta: signedMV(p.DeltaMV),
			AboveThreshold: req.ThresholdMV != nil && p.VMV >= *req.ThresholdMV}
		if ci := p.CI; ci != nil {
			r.VBand = mv(ci.VMV[0]) + " to " + mv(ci.VMV[1])
			r.DBand = signedMV(ci.DeltaMV[0]) + " to " + signedMV(ci.DeltaMV[1])
		}
		d.Rows = append(d.Rows, r)
	}
	for _, ion := range slices.Sorted(maps.Keys(out.NernstMV)) {
		d.Nernst = append(d.Nernst, nernstRow{Ion: ion, E: mv(out.NernstMV[ion])})
	}
	return nil
}

// mv shows a potential in mV to one decimal, with a true minus sign.
func mv(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return "—"
	}
	s := strconv.FormatFloat(v, 'f', 1, 64)
	if s == "-0.0" {
		s = "0.0"
	}
	return strings.Replace(s, "-", "−", 1)
}

// formField is the form field a request's JSON Pointer (or a form
// parameter) concerns.
func formField(where string) string {
	switch {
	case strings.HasPrefix(where, "/agonist_conc"), strings.HasPrefix(where, "agonist_conc"):
		return "agonist_conc"
	case strings.HasPrefix(where, "/channel/permeability/"):
		return "p_" + strings.TrimPrefix(where, "/channel/permeability/")
	case where == "/channel", where == "/channel/permeability":
		return "reversal_mv"
	case where == "/hill":
		return "log_ec50"
	case where == "/cell" || strings.HasPrefix(where, "/cell/"):
		return "preset"
	case where == "/agonist_id":
		return "agonist_id"
	case where == "/channel/name":
		return "channel"
	}
	// /channel/count, /hill/po_max, /conc_unit, …: the last token.
	return where[strings.LastIndex(where, "/")+1:]
}

// Bad tells whether the problem concerns the form field.
func (d potentialData) Bad(field string) bool {
	return d.Problem != nil && slices.Contains(d.Problem.Fields, field)
}

func readPotentialForm(q url.Values, ions []string) potentialForm {
	f := potentialForm{Preset: q.Get("preset"), Channel: q.Get("channel"), Count: q.Get("count"), Conductance: q.Get("conductance_ps"),
		Reversal: q.Get("reversal_mv"), Mg: q.Get("mg_mm"), Perm: map[string]string{}, CurveID: q.Get("curve_id"),
		LogEC50: q.Get("log_ec50"), Hill: q.Get("hill"), PoMax: q.Get("po_max"), Agonist: q.Get("agonist_id"),
		Concs: q.Get("agonist_conc"), Unit: q.Get("conc_unit"), Threshold: q.Get("threshold_mv")}
	for _, ion := range ions {
		f.Perm[ion] = q.Get("p_" + ion)
	}
	return f
}

// request turns the form into POST /v1/potential's body; an entry that is
// not a number is a 400 naming the form field.
func (f potentialForm) request(ions []string) (*wire.PotentialRequest, error) {
	var errs []error
	num := func(name, v string, required bool) *float64 {
		v = strings.TrimSpace(strings.ReplaceAll(v, "−", "-"))
		if v == "" {
			if required {
				errs = append(errs, service.BadParameter(name, "%s is required", name))
			}
			return nil
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			errs = append(errs, service.BadParameter(name, "%s=%q is not a number", name, v))
			return nil
		}
		return &x
	}
	req := &wire.PotentialRequest{ConcUnit: f.Unit, CurveID: strings.TrimSpace(f.CurveID), AgonistID: strings.TrimSpace(f.Agonist),
		Cell: wire.CellIn{Preset: f.Preset}, Channel: wire.ChannelIn{Name: strings.TrimSpace(f.Channel)}}
	if n := num("count", f.Count, true); n != nil {
		req.Channel.Count = *n
	}
	if g := num("conductance_ps", f.Conductance, true); g != nil {
		req.Channel.ConductancePS = *g
	}
	req.Channel.ReversalMV = num("reversal_mv", f.Reversal, false)
	if mg := num("mg_mm", f.Mg, false); mg != nil {
		req.Channel.MgMM = *mg
	}
	for _, ion := range ions {
		if p := num("p_"+ion, f.Perm[ion], false); p != nil {
			if req.Channel.Permeability == nil {
				req.Channel.Permeability = map[string]float64{}
			}
			req.Channel.Permeability[ion] = *p
		}
	}
	logEC50, hill, poMax := num("log_ec50", f.LogEC50, false), num("hill", f.Hill, false), num("po_max", f.PoMax, false)
	if req.CurveID != "" {
		// A stored fit: po_max scales it; log EC50 and Hill are its own.
		req.PoMax = poMax
	} else {
		req.Hill = &wire.HillIn{LogEC50: logEC50, Hill: hill, PoMax: poMax}
	}
	for i, v := range strings.FieldsFunc(f.Concs, func(r rune) bool { return r == ',' || r == ';' || r == ' ' || r == '\n' || r == '\t' || r == '\r' }) {
		c := num(fmt.Sprintf("agonist_conc (entry %d)", i+1), v, true)
		if c == nil {
			break
		}
		req.AgonistConc = append(req.AgonistConc, c)
	}
	req.ThresholdMV = num("threshold_mv", f.Threshold, false)
	if len(errs) > 0 {
		// The form shows one problem at a time, the first.
		return nil, errs[0]
	}
	return req, nil
}

// signedMV is mv with the sign of a change always shown (+12.3, −4.5,
// 0.0).
func signedMV(v float64) string {
	s := mv(v)
	if s != "0.0" && s != "—" && !strings.HasPrefix(s, "−") {
		s = "+" + s
	}
	return s
}
