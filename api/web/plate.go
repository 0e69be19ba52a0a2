package web

import (
	"bytes"
	"encoding/json"
	"fmt"
	"html/template"
	"io"
	"net/http"
	"sort"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/service"
	"sluice/api/wire"
)

type plateData struct {
	plateRow
	// Heatmap is the API's heat map drawing (api/figure), inlined: an
	// SVG that api/plot writes with every text escaped.
	Heatmap template.HTML
	QCRows  []qcRow
	Curves  []curveCard
	Schild  []wire.SchildResponse
}

// curveCard is a curve as its thumbnail's caption shows it; Q is its
// EC50's qualifier ("" when it has none).
type curveCard struct {
	wire.PlateCurve
	Q string
}

// qcRow is one figure of the QC table.
type qcRow struct {
	Name, Value, Note string
}

// plate is GET /plates/:id: the heat map with its scale and the legend of
// roles, the QC table, a thumbnail per curve, the downloads and, on an
// antagonist plate, its Schild analyses.
func (s *Site) plate(c *gin.Context) {
	ctx := c.Request.Context()
	v, err := s.svc.Plate(ctx, c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	d := plateData{plateRow: plateRow{PlateView: *v}}
	if len(v.QC) > 0 && string(v.QC) != "null" {
		d.QC = new(wire.PlateQC)
		if err := json.Unmarshal(v.QC, d.QC); err != nil {
			s.fail(c, fmt.Errorf("QC of plate %s: %w", v.PlateID, err))
			return
		}
		d.QCRows = qcRows(d.QC)
	}
	m, err := s.svc.PlateMap(ctx, v.PlateID)
	if err != nil {
		s.fail(c, err)
		return
	}
	var buf bytes.Buffer
	if err := figure.Heatmap(m).Write(&buf); err != nil {
		s.fail(c, fmt.Errorf("heat map of plate %s: %w", v.PlateID, err))
		return
	}
	d.Heatmap = template.HTML(buf.String()) // api/plot escapes every text it writes
	for _, raw := range v.Curves {
		var pc wire.PlateCurve
		if err := json.Unmarshal(raw, &pc); err != nil {
			s.fail(c, fmt.Errorf("curve of plate %s: %w", v.PlateID, err))
			return
		}
		card := curveCard{PlateCurve: pc}
		if pc.Qualifier != nil {
			card.Q = *pc.Qualifier
		}
		d.Curves = append(d.Curves, card)
	}
	for _, raw := range v.Schild {
		var r wire.SchildResponse
		if err := json.Unmarshal(raw, &r); err != nil {
			s.fail(c, fmt.Errorf("Schild analysis of plate %s: %w", v.PlateID, err))
			return
		}
		d.Schild = append(d.Schild, r)
	}
	s.renderCaution(c, http.StatusOK, "plate", "Plate "+v.Barcode, d)
}

// qcRows are a plate's QC figures as the table shows them. Shifts are
// fractions of the control window (fit/plate.QC), shown as percent.
func qcRows(q *wire.PlateQC) []qcRow {
	sb := sig(q.SignalBackground)
	if q.SignalBackgroundUnbounded {
		sb = "∞"
	}
	out := []qcRow{
		{"Z′", sig(q.ZPrime), "1 − 3(σmax + σmin)/|μmax − μmin| (Zhang, Chung & Oldenburg 1999)"},
		{"Signal window", sig(q.SignalWindow), "separation of the controls in units of the max controls' SD"},
		{"Signal/background", sb, "μmax/μmin; unbounded when the min controls' mean is 0"},
	}
	keys := make([]string, 0, len(q.CV))
	for k := range q.CV {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		out = append(out, qcRow{"CV of " + roleWords(k), sig(q.CV[k]) + " %", "SD/mean of the " + roleWords(k) + " wells"})
	}
	pct := func(x wire.Num) string { return sig(100*float64(x)) + " %" }
	out = append(out,
		qcRow{"Edge shift", pct(q.EdgeShift), "outer ring's median against the inner wells', as % of the control window"},
		qcRow{"Worst row shift", pct(q.WorstRow), "the row whose median differs most from the plate's, as % of the control window"},
		qcRow{"Worst column shift", pct(q.WorstCol), "the column whose median differs most from the plate's, as % of the control window"},
	)
	return out
}

// roleWords names a well role in words: "max control" for max_control.
func roleWords(role string) string {
	b := []byte(role)
	for i := range b {
		if b[i] == '_' {
			b[i] = ' '
		}
	}
	return string(b)
}

// plateCurvePlot is GET /plates/:id/curves/:curve/plot.svg: a curve of
// the plate drawn as the API draws it (GET /v1/curves/{id}/plot.svg),
// for the plate page's thumbnails; a curve of another plate is not here.
func (s *Site) plateCurvePlot(c *gin.Context) {
	d, err := s.svc.CurveData(c.Request.Context(), c.Param("curve"))
	if err != nil {
		s.fail(c, err)
		return
	}
	if d.PlateID != c.Param("id") {
		s.errorPage(c, http.StatusNotFound, "Plate "+c.Param("id")+" has no curve "+c.Param("curve")+".")
		return
	}
	s.svg(c, figure.StoredCurve(d))
}

// svg answers a figure drawn into a buffer, so that a drawing error is a
// clean error page, never half a figure.
func (s *Site) svg(c *gin.Context, fig interface{ Write(io.Writer) error }) {
	var buf bytes.Buffer
	if err := fig.Write(&buf); err != nil {
		s.fail(c, fmt.Errorf("draw %s: %w", c.Request.URL.Path, err))
		return
	}
	c.Header("Cache-Control", "private, no-cache")
	c.Data(http.StatusOK, "image/svg+xml", buf.Bytes())
}

// plateWellsCSV is GET /plates/:id/wells.csv: every well's raw and
// normalised value (service.PlateWells, as GET /v1/plates/{id}/wells).
func (s *Site) plateWellsCSV(c *gin.Context) {
	l, err := s.svc.PlateWells(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	var buf bytes.Buffer
	if err := service.WriteWellsCSV(&buf, l); err != nil {
		s.fail(c, fmt.Errorf("wells.csv of plate %s: %w", l.PlateID, err))
		return
	}
	s.csv(c, service.CSVName(l.PlateID, "wells"), buf.Bytes())
}

// plateCurvesCSV is GET /plates/:id/curves.csv: the file GET
// /v1/plates/{id}/curves.csv answers (service.WritePlateCurvesCSV).
func (s *Site) plateCurvesCSV(c *gin.Context) {
	p, curves, err := s.svc.PlateCurves(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	var buf bytes.Buffer
	if err := service.WritePlateCurvesCSV(&buf, p, curves); err != nil {
		s.fail(c, fmt.Errorf("curves.csv of plate %s: %w", p.ID, err))
		return
	}
	s.csv(c, service.CSVName(p.Barcode, "curves"), buf.Bytes())
}

// csv answers a CSV download named name.
func (s *Site) csv(c *gin.Context, name string, body []byte) {
	c.Header("Content-Disposition", `attachment; filename="`+name+`"`)
	c.Header("Cache-Control", "no-store")
	c.Data(http.StatusOK, "text/csv; charset=utf-8", body)
}
