package api

import (
	"bytes"
	"fmt"
	"io"
	"net/http"

	"sluice/api/figure"

	"github.com/gin-gonic/gin"
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
	conc := make([]float64, len(input.Points))
	resp := make([]float64, len(input.Points))
	for i, p := range input.Points {
		conc[i], resp[i] = unit.ToMolar(*p.Conc), *p.Response
	}
	fig := figure.Curve(figure.Title(run.CompoundID, run.ID), &res.FitResult, conc, resp)
	if run.AssayID != "" {
		if a, err := s.svc.Assay(c.Request.Context(), run.AssayID); err == nil && a.Units != "" {
			fig.YLabel = "response (" + a.Units + ")"
		}
	}
	s.writeSVG(c, fig)
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
