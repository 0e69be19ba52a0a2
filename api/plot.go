package api

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"net/http"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/plot"
	"sluice/api/wire"
	"sluice/fit"
)

// fitPlot is GET /v1/fits/{id}/plot.svg: the points, the fitted curve and
// its pointwise confidence band on a log-concentration axis.
func (s *Server) fitPlot(c *gin.Context) {
	sf, err := s.svc.StoredFit(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	run, res, input, unit := sf.Run, &sf.Result, &sf.Input, sf.Unit
	fig := &plot.Curve{Title: plotTitle(run.CompoundID, run.ID), YLabel: "response", Footnote: wire.Caution}
	if run.AssayID != "" {
		if a, err := s.svc.Assay(c.Request.Context(), run.AssayID); err == nil && a.Units != "" {
			fig.YLabel = "response (" + a.Units + ")"
		}
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range input.Points {
		cm := unit.ToMolar(*p.Conc)
		fig.PointConc = append(fig.PointConc, cm)
		fig.PointResp = append(fig.PointResp, *p.Response)
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
	s.writeSVG(c, fig)
}

// plotTitle names a figure by its compound, else by its run.
func plotTitle(compound, id string) string {
	if compound != "" {
		return compound
	}
	return "Fit " + id
}

// writeSVG renders a figure and sends it.
func (s *Server) writeSVG(c *gin.Context, fig interface{ Write(io.Writer) error }) {
	var buf bytes.Buffer
	if err := fig.Write(&buf); err != nil {
		s.writeProblem(c, fmt.Errorf("render %s: %w", c.Request.URL.Path, err))
		return
	}
	c.Data(http.StatusOK, "image/svg+xml", buf.Bytes())
}
