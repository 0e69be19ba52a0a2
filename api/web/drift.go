package web

import (
	"bytes"
	"html/template"
	"math"
	"net/http"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/service"
	"sluice/api/wire"
)

// driftList is GET /drift: every assay with its charts' statuses and
// latest recorded violations (service.DriftOverview), each linking to the
// assay's drift page.
func (s *Site) driftList(c *gin.Context) {
	ctx := c.Request.Context()
	assays, err := s.svc.Assays(ctx)
	if err != nil {
		s.fail(c, err)
		return
	}
	o, err := s.svc.DriftOverview(ctx)
	if err != nil {
		s.fail(c, err)
		return
	}
	s.render(c, http.StatusOK, "drift", "Drift", withCharts(assays, o.Charts))
}

// withCharts pairs each assay with its charts and their worst status.
func withCharts(assays []wire.CatalogueEntry, charts []wire.DriftStatus) []assayStatus {
	byAssay := map[string][]wire.DriftStatus{}
	for _, ch := range charts {
		byAssay[ch.AssayID] = append(byAssay[ch.AssayID], ch)
	}
	out := make([]assayStatus, 0, len(assays))
	for _, a := range assays {
		as := assayStatus{CatalogueEntry: a, Charts: byAssay[a.ID]}
		for _, ch := range as.Charts {
			if statusRank[ch.Status] > statusRank[as.Worst] {
				as.Worst = ch.Status
			}
		}
		out = append(out, as)
	}
	return out
}

// assayDriftData is the assay drift page: the filter as given and a
// section per chart.
type assayDriftData struct {
	Assay    *wire.CatalogueEntry
	From, To string
	Charts   []driftSection
}

// driftSection is one metric's chart with its figure and violations.
type driftSection struct {
	*wire.DriftChart
	Figure template.HTML
	// Warning and Control are the baseline's mean ± 2 SD and ± 3 SD (the
	// limits of the 1-2s and 1-3s rules); NaN without a baseline.
	Warning, Control [2]float64
	// Violations are the points that broke a rule, newest first.
	Violations []driftViolation
}

// driftViolation is a point that broke rules.
type driftViolation struct {
	Rules string
	wire.DriftPoint
}

// assayDrift is GET /assays/:id/drift?from=&to=: a control chart per
// metric (figure.Drift, the API's drawing) with its baseline, limits and
// violations; from and to (dates, or RFC 3339 times) bound the points
// shown, to's day included.
func (s *Site) assayDrift(c *gin.Context) {
	ctx := c.Request.Context()
	from, err := dateParam(c, "from", false)
	if err != nil {
		s.fail(c, err)
		return
	}
	to, err := dateParam(c, "to", true)
	if err != nil {
		s.fail(c, err)
		return
	}
	if !from.IsZero() && !to.IsZero() && !from.Before(to) {
		s.fail(c, service.BadParameter("to", "to (%s) is before from (%s)", c.Query("to"), c.Query("from")))
		return
	}
	a, err := s.svc.Assay(ctx, c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	charts, err := s.svc.DriftCharts(ctx, a.ID, from, to)
	if err != nil {
		s.fail(c, err)
		return
	}
	d := assayDriftData{Assay: a, From: c.Query("from"), To: c.Query("to")}
	for _, ch := range charts {
		var buf bytes.Buffer
		if err := figure.Drift(ch).Write(&buf); err != nil {
			s.fail(c, err)
			return
		}
		sec := driftSection{DriftChart: ch, Figure: template.HTML(buf.String()),
			Warning: [2]float64{math.NaN(), math.NaN()}, Control: [2]float64{math.NaN(), math.NaN()}}
		if b := ch.Baseline; b != nil {
			m, sd := float64(b.Mean), float64(b.SD)
			sec.Warning, sec.Control = [2]float64{m - 2*sd, m + 2*sd}, [2]float64{m - 3*sd, m + 3*sd}
		}
		for i := len(ch.Points) - 1; i >= 0; i-- {
			if p := ch.Points[i]; len(p.Violations) > 0 {
				sec.Violations = append(sec.Violations, driftViolation{Rules: strings.Join(p.Violations, ", "), DriftPoint: p})
			}
		}
		d.Charts = append(d.Charts, sec)
	}
	s.renderCaution(c, http.StatusOK, "assay_drift", "Drift of "+a.ID, d)
}

// dateParam reads an optional query parameter that is a date
// (2026-11-03, as a date input sends it) or an RFC 3339 time; a date
// that ends a range (end) means the end of that day (UTC).
func dateParam(c *gin.Context, name string, end bool) (time.Time, error) {
	v := c.Query(name)
	if v == "" {
		return time.Time{}, nil
	}
	if t, err := time.Parse(time.DateOnly, v); err == nil {
		if end {
			t = t.AddDate(0, 0, 1)
		}
		return t, nil
	}
	t, err := time.Parse(time.RFC3339Nano, v)
	if err != nil {
		return time.Time{}, service.BadParameter(name, "%s=%q is not a date (2026-11-03) or an RFC 3339 time", name, v)
	}
	return t, nil
}
