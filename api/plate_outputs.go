package api

import (
	"encoding/csv"
	"fmt"
	"math"
	"net/http"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/wire"
	"sluice/fit/plate"
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
			header = append(header, "ec50", "ec50_ci_lo", "ec50_ci_hi", "pec50", "n", "r2", "flags")
			// A write error is the client's connection; Flush reports it.
			_ = w.Write(header)
		}
		row := []string{p.ID, p.Barcode, pc.Key, pc.CompoundID, pc.AntagonistID, strconv.FormatFloat(pc.AntagonistConc, 'g', -1, 64), pc.Model, pc.Status}
		for _, pr := range pc.Params {
			row = append(row, num(pr.Estimate), num(pr.SE))
		}
		row = append(row, num(pc.EC50.Estimate), num(pc.EC50.CI[0]), num(pc.EC50.CI[1]), num(pc.PEC50), strconv.Itoa(pc.Stats.N),
			num(pc.Stats.R2), strings.Join(pc.Flags, ";"))
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
	p, f, rows := m.Plate, m.Format, m.Wells
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, r := range rows {
		if r.Value != nil {
			lo, hi = math.Min(lo, *r.Value), math.Max(hi, *r.Value)
		}
	}
	cell := 640.0 / float64(f.Cols)
	w, h := 60+cell*float64(f.Cols)+20, 70+cell*float64(f.Rows)+70
	var b strings.Builder
	fmt.Fprintf(&b, `<svg xmlns="http://www.w3.org/2000/svg" width="%.0f" height="%.0f" font-family="sans-serif" font-size="11">`+"\n", w, h)
	fmt.Fprintf(&b, `<rect width="100%%" height="100%%" fill="white"/>`+"\n")
	verdict := "QC pending"
	var reasons []string
	if qc := m.QC; qc != nil {
		verdict = fmt.Sprintf("QC %s · Z′ %.2f", map[bool]string{true: "pass", false: "FAIL"}[qc.Pass], qc.ZPrime)
		reasons = qc.Reasons
	}
	fmt.Fprintf(&b, `<text x="60" y="24" font-size="15" font-weight="bold">Plate %s (%d wells) · %s</text>`+"\n", esc(p.Barcode), f.Wells, esc(verdict))
	if len(reasons) > 0 {
		fmt.Fprintf(&b, `<text x="60" y="42" fill="#a00">%s</text>`+"\n", esc(strings.Join(reasons, "; ")))
	}
	for _, r := range rows {
		x, y := 60+cell*float64(r.Col), 60+cell*float64(r.Row)
		fill := "#eeeeee"
		if r.Value != nil && hi > lo {
			fill = ramp((*r.Value - lo) / (hi - lo))
		}
		stroke := "none"
		switch plate.Role(r.Role) {
		case plate.MaxControl:
			stroke = "#d62728"
		case plate.MinControl:
			stroke = "#1f77b4"
		}
		fmt.Fprintf(&b, `<rect x="%.1f" y="%.1f" width="%.1f" height="%.1f" fill="%s" stroke="%s" stroke-width="1.5"><title>%s %s %s</title></rect>`+"\n",
			x, y, cell-1, cell-1, fill, stroke, r.Well, r.Role, valueText(r.Value))
	}
	step := 1
	if f.Cols > 24 {
		step = 4
	}
	for col := 0; col < f.Cols; col += step {
		fmt.Fprintf(&b, `<text x="%.1f" y="56" text-anchor="middle">%d</text>`+"\n", 60+cell*(float64(col)+0.5), col+1)
	}
	for row := 0; row < f.Rows; row += step {
		fmt.Fprintf(&b, `<text x="52" y="%.1f" text-anchor="end">%s</text>`+"\n", 60+cell*(float64(row)+0.7), f.Name(plate.Well{Row: row})[:len(f.Name(plate.Well{Row: row}))-2])
	}
	fmt.Fprintf(&b, `<text x="60" y="%.1f" fill="#444">red outline: max controls · blue: min controls · colour: raw value %.4g to %.4g</text>`+"\n", h-44, lo, hi)
	fmt.Fprintf(&b, `<text x="60" y="%.1f" font-size="9" fill="#444">%s</text>`+"\n", h-28, esc(wire.Caution[:strings.Index(wire.Caution, ". ")+1]))
	b.WriteString("</svg>\n")
	c.Data(http.StatusOK, "image/svg+xml", []byte(b.String()))
}

func valueText(v *float64) string {
	if v == nil {
		return "no value"
	}
	return strconv.FormatFloat(*v, 'g', 6, 64)
}

// ramp maps [0, 1] to a perceptually ordered dark-blue → yellow scale.
func ramp(t float64) string {
	t = math.Min(math.Max(t, 0), 1)
	r := 40 + t*(250-40)
	g := 30 + t*(230-30)
	b := 110 + t*(40-110)
	return fmt.Sprintf("#%02x%02x%02x", int(r), int(g), int(b))
}

func esc(s string) string {
	return strings.NewReplacer("&", "&amp;", "<", "&lt;", ">", "&gt;", `"`, "&quot;").Replace(s)
}
