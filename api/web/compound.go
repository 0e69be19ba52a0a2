package web

import (
	"net/http"
	"slices"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/service"
	"sluice/api/wire"
)

type compoundData struct {
	Compound *wire.CatalogueEntry
	Assays   []assayHistory
}

// assayHistory is a compound's history in one assay as the page shows it.
type assayHistory struct {
	wire.PotencyHistory
	Runs     []runRow
	Excluded []excludedCount
	// ConfidencePct names the geometric mean's interval level ("95%").
	ConfidencePct string
}

// runRow is one run with its pEC50 interval (from the log EC50's, turned
// round) and why it is left out in words.
type runRow struct {
	wire.PotencyRecord
	PLo, PHi float64
	Why      string
}

// excludedCount is how many runs left the summary for one reason.
type excludedCount struct {
	Reason, Meaning string
	N               int
}

// compoundPage is GET /compounds/:id: per assay, the potency history
// chart, the summary over the usable runs and every run.
func (s *Site) compoundPage(c *gin.Context) {
	ctx := c.Request.Context()
	id := c.Param("id")
	cpd, err := s.svc.Compound(ctx, id)
	if err != nil {
		s.fail(c, err)
		return
	}
	pot, err := s.svc.Potency(ctx, service.PotencyQuery{CompoundID: id, All: true})
	if err != nil {
		s.fail(c, err)
		return
	}
	d := compoundData{Compound: cpd}
	for _, h := range pot.Assays {
		ah := assayHistory{PotencyHistory: h, ConfidencePct: percent(float64(h.Summary.Confidence))}
		for _, r := range h.Runs {
			row := runRow{PotencyRecord: r, PLo: -float64(r.LogEC50CI[1]), PHi: -float64(r.LogEC50CI[0])}
			if !r.Usable {
				row.Why = wire.ExclusionMeanings[r.Excluded]
				if row.Why == "" {
					row.Why = r.Excluded
				}
			}
			ah.Runs = append(ah.Runs, row)
		}
		for reason, n := range h.Summary.Excluded {
			if n > 0 {
				ah.Excluded = append(ah.Excluded, excludedCount{Reason: reason, Meaning: wire.ExclusionMeanings[reason], N: n})
			}
		}
		slices.SortFunc(ah.Excluded, func(a, b excludedCount) int { return b.N - a.N })
		d.Assays = append(d.Assays, ah)
	}
	s.renderCaution(c, http.StatusOK, "compound", "Compound "+id, d)
}

// compoundHistoryPlot is GET /compounds/:id/history.svg?assay_id=: the API's
// drawing of the compound's history in that assay (figure.History).
func (s *Site) compoundHistoryPlot(c *gin.Context) {
	assay := c.Query("assay_id")
	if assay == "" {
		s.errorPage(c, http.StatusBadRequest, "The query parameter assay_id is required: the history in which assay?")
		return
	}
	pot, err := s.svc.Potency(c.Request.Context(), service.PotencyQuery{CompoundID: c.Param("id"), AssayID: assay, All: true})
	if err != nil {
		s.fail(c, err)
		return
	}
	if len(pot.Assays) != 1 {
		s.errorPage(c, http.StatusBadRequest, "The query parameter assay_id names no history of this compound.")
		return
	}
	fig, err := figure.History(&pot.Assays[0])
	if err != nil {
		s.fail(c, err)
		return
	}
	s.writeFigure(c, fig)
}
