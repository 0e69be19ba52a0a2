package api

import (
	"encoding/csv"
	"fmt"
	"math"
	"net/http"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/wire"
)

// plateCurvesCSV is GET /v1/plates/{id}/curves.csv: one row per curve.
func (s *Server) plateCurvesCSV(c *gin.Context) {
	p, curves, err := s.svc.PlateCurves(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Header("Content-Type", "text/csv; charset=utf-8")
	c.Header("Content-Disposition", fmt.Sprintf(`attachment; filename="%s-curves.csv"`, strings.ReplaceAll(p.Barcode, `"`, "")))
	c.Status(http.StatusOK)
	w := csv.NewWriter(c.Writer)
	num := func(v wire.Num) string {
		f := float64(v)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return ""
		}
		return strconv.FormatFloat(f, 'g', -1, 64)
	}
	for i, pc := range curves {
		if i == 0 {
			header := []string{"plate_id", "barcode", "key", "compound_id", "antagonist_id", "antagonist_conc", "model", "status"}
			for _, pr := range pc.Params {
				header = append(header, pr.Name, pr.Name+"_se")
			}
			header = append(header, "ec50", "ec50_ci_lo", "ec50_ci_hi", "pec50", "n", "r2", "flags", "activity", "qualifier", "bound", "direction",
				"log_ec50", "log_ec50_ci_lo", "log_ec50_ci_hi", "plate_qc", "curve_id")
			// A write error is the client's connection; Flush reports it.
			_ = w.Write(header)
		}
		row := []string{p.ID, p.Barcode, pc.Key, pc.CompoundID, pc.AntagonistID, strconv.FormatFloat(pc.AntagonistConc, 'g', -1, 64), pc.Model, pc.Status}
		for _, pr := range pc.Params {
			row = append(row, num(pr.Estimate), num(pr.SE))
		}
		row = append(row, num(pc.EC50.Estimate), num(pc.EC50.CI[0]), num(pc.EC50.CI[1]), num(pc.PEC50), strconv.Itoa(pc.Stats.N),
			num(pc.Stats.R2), strings.Join(pc.Flags, ";"), pc.Activity, deref(pc.Qualifier), num(pc.Bound), deref(pc.Direction))
		row = append(row, logEC50Cols(pc, num)...)
		row = append(row, plateVerdict(p), pc.ID)
		_ = w.Write(row)
	}
	w.Flush()
	if err := w.Error(); err != nil {
		s.log.Warn("curves.csv", "plate", p.ID, "err", err)
	}
}

// plateHeatmap is GET /v1/plates/{id}/heatmap.svg: raw values by well, the
// controls outlined, the QC verdict in the title.
func (s *Server) plateHeatmap(c *gin.Context) {
	m, err := s.svc.PlateMap(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	s.writeSVG(c, figure.Heatmap(m))
}

// deref is the string behind p, "" for nil (a JSON null).
func deref(p *string) string {
	if p == nil {
		return ""
	}
	return *p
}
