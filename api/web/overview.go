package web

import (
	"net/http"

	"github.com/gin-gonic/gin"

	"sluice/api/wire"
	"sluice/db"
	"sluice/fit/drift"
)

// overviewPlates and overviewReview bound the overview's lists.
const (
	overviewPlates = 10
	overviewReview = 10
)

type overviewData struct {
	Assays []assayStatus
	Plates []plateRow
	Review []wire.PotencyRecord
}

// assayStatus is an assay with its drift charts' statuses.
type assayStatus struct {
	wire.CatalogueEntry
	Charts []wire.DriftStatus
	// Worst is the worst chart status ("" without charts).
	Worst string
}

// statusRank orders drift statuses from best to worst.
var statusRank = map[string]int{string(drift.InControl): 1, string(drift.Warning): 2, string(drift.OutOfControl): 3}

// overview is GET /: assays with their drift status, the latest plates
// with their QC, and curves awaiting review.
func (s *Site) overview(c *gin.Context) {
	ctx := c.Request.Context()
	assays, err := s.svc.Assays(ctx)
	if err != nil {
		s.fail(c, err)
		return
	}
	drift, err := s.svc.DriftOverview(ctx)
	if err != nil {
		s.fail(c, err)
		return
	}
	d := overviewData{Assays: withCharts(assays, drift.Charts)}
	list, err := s.svc.Plates(ctx, db.PlateFilter{Limit: overviewPlates})
	if err != nil {
		s.fail(c, err)
		return
	}
	if d.Plates, err = plateRows(list); err != nil {
		s.fail(c, err)
		return
	}
	if d.Review, err = s.svc.AwaitingReview(ctx, overviewReview); err != nil {
		s.fail(c, err)
		return
	}
	s.renderCaution(c, http.StatusOK, "overview", "Overview", d)
}
