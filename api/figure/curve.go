package figure

import (
	"fmt"
	"math"
	"strings"

	"sluice/api/plot"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/fit"
)

// Curve is a fitted curve's drawing: the points (molar concentrations, 0
// for the vehicle), the fitted curve and its pointwise confidence band on
// a log-concentration axis. A single fit's plot and a stored curve's plot
// of either kind are this figure.
func Curve(title string, res *wire.FitResult, conc, resp []float64) *plot.Curve {
	fig := &plot.Curve{Title: title, YLabel: "response", Footnote: wire.Caution, PointConc: conc, PointResp: resp}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, cm := range conc {
		if cm > 0 {
			lo, hi = math.Min(lo, cm), math.Max(hi, cm)
		}
	}
	parts := []string{res.Model, res.Status}
	// An inactive curve has no potency, hence no curve to draw.
	if res.Status == fit.StatusConverged && res.Activity != string(fit.ActivityInactive) && !math.IsInf(lo, 0) {
		theta := res.Params.Estimates()
		np := len(theta)
		cov := make([]float64, np*np)
		for i := range res.Covariance {
			for j, v := range res.Covariance[i] {
				cov[i*np+j] = float64(v)
			}
		}
		const n = 200
		a, b := math.Log10(lo)-0.5, math.Log10(hi)+0.5
		for k := 0; k < n; k++ {
			fig.LineConc = append(fig.LineConc, math.Pow(10, a+(b-a)*float64(k)/(n-1)))
		}
		fig.Line, fig.BandLo, fig.BandHi = fit.Band(fit.Model(res.Model), theta, cov, res.Stats.DOF, float64(res.Confidence), fig.LineConc)
		label := "EC50"
		if res.Direction != nil && *res.Direction == string(fit.Falling) {
			label = "IC50"
		}
		fig.Mark, fig.MarkLabel = float64(res.EC50.Estimate), label
		fig.BandLabel = fmt.Sprintf("%.0f%% Wald band (delta method)", 100*float64(res.Confidence))
		parts = append(parts, fmt.Sprintf("p%s %.2f", label, float64(res.PEC50)))
	}
	if res.Activity == string(fit.ActivityInactive) {
		fig.Note = "inactive: no potency"
	}
	if len(res.Flags) > 0 {
		parts = append(parts, "flags: "+strings.Join(res.Flags, ", "))
	}
	fig.Subtitle = strings.Join(parts, " · ")
	return fig
}

// Title names a figure by its compound, else by its record.
func Title(compound, id string) string {
	if compound != "" {
		return compound
	}
	return "Fit " + id
}

// StoredCurve is a stored curve's drawing: Curve titled with its compound
// (its ID when it names none), with the points its refits left out drawn
// hollow.
func StoredCurve(d *service.CurveData) *plot.Curve {
	conc, resp := make([]float64, len(d.Points)), make([]float64, len(d.Points))
	for i, p := range d.Points {
		conc[i], resp[i] = p.Conc, p.Response
	}
	title := d.CompoundID
	if title == "" {
		title = "Curve " + d.ID
	}
	fig := Curve(title, &d.Result, conc, resp)
	for _, p := range d.Excluded {
		fig.ExcludedConc, fig.ExcludedResp = append(fig.ExcludedConc, p.Conc), append(fig.ExcludedResp, p.Response)
	}
	return fig
}
