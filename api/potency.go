package api

import (
	"encoding/csv"
	"fmt"
	"math"
	"net/http"
	"strconv"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
)

// timeParams reads optional RFC 3339 query parameters into dst.
func (s *Server) timeParams(c *gin.Context, dst map[string]*time.Time) bool {
	for name, t := range dst {
		if v := c.Query(name); v != "" {
			p, err := time.Parse(time.RFC3339Nano, v)
			if err != nil {
				s.writeProblem(c, badParameter(name, "%q is not an RFC 3339 time (e.g. 2026-11-03T09:30:00Z)", v))
				return false
			}
			*t = p
		}
	}
	return true
}

// intParam reads an optional whole-number query parameter in [lo, hi].
func (s *Server) intParam(c *gin.Context, name string, lo, hi int, dst *int) bool {
	v := c.Query(name)
	if v == "" {
		return true
	}
	n, err := strconv.Atoi(v)
	if err != nil || n < lo || n > hi {
		s.writeProblem(c, badParameter(name, "%q is not a whole number from %d to %d", v, lo, hi))
		return false
	}
	*dst = n
	return true
}

// compoundPotency is GET /v1/compounds/{id}/potency: with assay_id one
// history, without it one per assay.
func (s *Server) compoundPotency(c *gin.Context) {
	q, ok := s.potencyQuery(c)
	if !ok {
		return
	}
	out, err := s.svc.Potency(c.Request.Context(), q)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	if q.AssayID != "" && len(out.Assays) == 1 {
		h := out.Assays[0]
		h.Caution = wire.Caution
		c.JSON(http.StatusOK, h)
		return
	}
	c.JSON(http.StatusOK, out)
}

// potencyQuery decodes the query of the compound potency routes.
func (s *Server) potencyQuery(c *gin.Context) (service.PotencyQuery, bool) {
	q := service.PotencyQuery{CompoundID: c.Param("id"), AssayID: c.Query("assay_id"), All: true}
	if !s.timeParams(c, map[string]*time.Time{"from": &q.From, "to": &q.To}) {
		return q, false
	}
	switch v := c.DefaultQuery("include", "all"); v {
	case "all":
	case "usable":
		q.All = false
	default:
		s.writeProblem(c, badParameter("include", "include must be usable or all, got %q", v))
		return q, false
	}
	if !s.intParam(c, "msr_window", 3, 1000, &q.MSRWindow) {
		return q, false
	}
	return q, true
}

// assayPotency is GET /v1/assays/{id}/potency: the assay's compound table,
// one page, as JSON or (format=csv or Accept: text/csv) CSV.
func (s *Server) assayPotency(c *gin.Context) {
	q := service.AssayPotencyQuery{AssayID: c.Param("id"), Cursor: c.Query("cursor"), Sort: c.Query("sort")}
	if !s.intParam(c, "limit", 1, db.MaxListLimit, &q.Limit) || !s.intParam(c, "msr_window", 3, 1000, &q.MSRWindow) {
		return
	}
	format := c.Query("format")
	if format != "" && format != "json" && format != "csv" {
		s.writeProblem(c, badParameter("format", "format must be json or csv, got %q", format))
		return
	}
	out, err := s.svc.AssayPotency(c.Request.Context(), q)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	if format == "csv" || (format == "" && strings.Contains(c.GetHeader("Accept"), "text/csv")) {
		s.writeAssayCSV(c, out)
		return
	}
	c.JSON(http.StatusOK, out)
}

// writeAssayCSV writes the compound table as CSV; the next page's cursor
// is in the Link-free header Sluice-Next-Cursor.
func (s *Server) writeAssayCSV(c *gin.Context, out *wire.AssayPotency) {
	if out.NextCursor != "" {
		c.Header("Sluice-Next-Cursor", out.NextCursor)
	}
	c.Header("Content-Type", "text/csv; charset=utf-8")
	c.Status(http.StatusOK)
	w := csv.NewWriter(c.Writer)
	_ = w.Write([]string{"assay_id", "compound_id", "runs", "last_measured_at", "n", "mean_log_ec50", "sd_log_ec50",
		"geo_mean_ec50", "geo_mean_ci_lo", "geo_mean_ci_hi", "pec50_mean", "msr", "msr_overall",
		"excluded_superseded", "excluded_rejected", "excluded_plate_qc_failed", "excluded_inactive", "excluded_inconclusive", "excluded_qualified"})
	for _, r := range out.Compounds {
		m := r.Summary
		ex := m.Excluded
		_ = w.Write([]string{out.AssayID, r.CompoundID, strconv.Itoa(r.Runs), r.LastMeasured, strconv.Itoa(m.N), csvNum(m.MeanLogEC50),
			csvNum(m.SDLogEC50), csvNum(m.GeoMeanEC50), csvNum(m.GeoMeanCI[0]), csvNum(m.GeoMeanCI[1]), csvNum(m.PEC50Mean),
			csvNum(m.MSR), csvNum(m.MSROverall), strconv.Itoa(ex["superseded"]), strconv.Itoa(ex["rejected"]),
			strconv.Itoa(ex["plate_qc_failed"]), strconv.Itoa(ex["inactive"]), strconv.Itoa(ex["inconclusive"]), strconv.Itoa(ex["qualified"])})
	}
	w.Flush()
	// The caution as a comment line (csv.Reader's Comment '#').
	fmt.Fprintf(c.Writer, "# %s\n", wire.Caution)
	if err := w.Error(); err != nil {
		s.log.Warn("assay potency csv", "assay", out.AssayID, "err", err)
	}
}

// csvNum writes a number in full precision, NaN and ±Inf as empty.
func csvNum(v wire.Num) string {
	f := float64(v)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return ""
	}
	return strconv.FormatFloat(f, 'g', -1, 64)
}

// getCurve is GET /v1/curves/{id}.
func (s *Server) getCurve(c *gin.Context) {
	out, err := s.svc.Curve(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, out)
}

// reviewCurve is POST /v1/curves/{id}/review.
func (s *Server) reviewCurve(c *gin.Context) { handleIDWrite(s, c, s.svc.Review) }

// refitCurve is POST /v1/curves/{id}/refit.
func (s *Server) refitCurve(c *gin.Context) { handleIDWrite(s, c, s.svc.Refit) }

// createMSRStudy is POST /v1/msr-studies.
func (s *Server) createMSRStudy(c *gin.Context) { handleJSONWrite(s, c, s.svc.CreateMSRStudy) }

// getMSRStudy is GET /v1/msr-studies/{id}: the study as it was answered.
func (s *Server) getMSRStudy(c *gin.Context) {
	m, err := s.svc.MSRStudy(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.Data(http.StatusOK, "application/json", m.Result)
}

// listPlates is GET /v1/plates?assay_id=&barcode=&from=&to=&limit=&cursor=.
func (s *Server) listPlates(c *gin.Context) {
	f := db.PlateFilter{AssayID: c.Query("assay_id"), Barcode: c.Query("barcode"), Cursor: c.Query("cursor")}
	if !s.timeParams(c, map[string]*time.Time{"from": &f.From, "to": &f.To}) || !s.intParam(c, "limit", 1, db.MaxListLimit, &f.Limit) {
		return
	}
	out, err := s.svc.Plates(c.Request.Context(), f)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, out)
}

// plateWells is GET /v1/plates/{id}/wells.
func (s *Server) plateWells(c *gin.Context) {
	out, err := s.svc.PlateWells(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, out)
}

// compoundPotencyPlot is GET /v1/compounds/{id}/potency.svg?assay_id=:
// the history drawn (api/plot.History). Without assay_id the compound must
// have curves in one assay only.
func (s *Server) compoundPotencyPlot(c *gin.Context) {
	q, ok := s.potencyQuery(c)
	if !ok {
		return
	}
	out, err := s.svc.Potency(c.Request.Context(), q)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	if len(out.Assays) != 1 {
		s.writeProblem(c, badParameter("assay_id", "compound %s has curves in %d assays; choose one with assay_id", q.CompoundID, len(out.Assays)))
		return
	}
	fig, err := figure.History(&out.Assays[0])
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	s.writeSVG(c, fig)
}
