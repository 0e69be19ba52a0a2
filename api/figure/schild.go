package figure

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"sluice/api/plot"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/fit"
)

// Schild is a stored Schild analysis' drawing: the agonist curves at each
// antagonist concentration (points and fitted Hill curves) on the left,
// the Schild plot of log(DR − 1) against log[B] with its regression on the
// right; titled by its compounds, the run's id in the subtitle.
func Schild(st *service.StoredSchild) *plot.Schild {
	res, unit := &st.Result, st.Unit
	fig := &plot.Schild{Title: SchildTitle(st.Run.AgonistID, st.Run.AntagonistID), Footnote: wire.Caution}
	for i, sc := range st.Request.Curves {
		if i >= len(res.Curves) {
			break
		}
		ser := plot.Series{Label: fmt.Sprintf("[B] %.3g M", unit.ToMolar(*sc.AntagonistConc))}
		for _, p := range sc.Points {
			ser.PointConc = append(ser.PointConc, unit.ToMolar(*p.Conc))
			ser.PointResp = append(ser.PointResp, *p.Response)
		}
		cr := res.Curves[i]
		if cr.Status == fit.StatusConverged && cr.Activity != string(fit.ActivityInactive) {
			theta := cr.Params.Estimates()
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
		fig.Subtitle = "not competitive: " + strings.Join(res.Flags, ", ")
	} else if res.Global != nil {
		fig.Subtitle = fmt.Sprintf("global fit: pA2 %.2f, slope %.2f", float64(res.Global.PA2.Estimate), float64(res.Global.Slope.Estimate))
		if res.Global.PKB != nil {
			fig.Subtitle += fmt.Sprintf(", pKB %.2f", float64(res.Global.PKB.Estimate))
		}
	}
	fig.Subtitle += " · run " + st.Run.ID
	return fig
}

// SchildTitle names a Schild analysis by its compounds, "demo-ag-1 vs
// demo-ant-2", saying which one the request left unnamed; the run's id
// goes in the subtitle.
func SchildTitle(agonist, antagonist string) string {
	switch {
	case agonist != "" && antagonist != "":
		return agonist + " vs " + antagonist
	case agonist != "":
		return agonist + " vs an unnamed antagonist"
	case antagonist != "":
		return "an unnamed agonist vs " + antagonist
	}
	return "Schild analysis (agonist and antagonist unnamed)"
}
