package api

import (
	"bytes"
	"fmt"
	"io"
	"net/http"

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
	var conc, resp []float64
	for _, p := range input.Points {
		conc = append(conc, unit.ToMolar(*p.Conc))
		resp = append(resp, *p.Response)
	}
	fig := curveFigure("Fit "+run.ID, &res.FitResult, conc, resp)
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
