package web

import (
	"net/http"
	"net/url"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
)

// platesPage is how many plates /plates lists at a time.
const platesPage = 25

// plateSearch is /plates' form as the visitor filled it in.
type plateSearch struct {
	Barcode, Assay, From, To string
}

type platesData struct {
	Search plateSearch
	Assays []wire.CatalogueEntry
	Plates []plateRow
	// Next is the next page's address ("" on the last); First the first
	// page's when this is a later one ("" otherwise).
	Next, First string
}

// plates is GET /plates?barcode=&assay=&from=&to=&cursor=: plates newest
// experiment first, platesPage at a time. from and to are days
// (YYYY-MM-DD, UTC), both included; an unknown assay or a malformed or
// reversed date is a 400 page naming the parameter.
func (s *Site) plates(c *gin.Context) {
	ctx := c.Request.Context()
	q := plateSearch{Barcode: strings.TrimSpace(c.Query("barcode")), Assay: c.Query("assay"), From: c.Query("from"), To: c.Query("to")}
	f := db.PlateFilter{AssayID: q.Assay, Barcode: q.Barcode, Cursor: c.Query("cursor"), Limit: platesPage}
	for _, d := range []struct {
		name, val string
		into      *time.Time
		add       int
	}{{"from", q.From, &f.From, 0}, {"to", q.To, &f.To, 1}} {
		if d.val == "" {
			continue
		}
		t, err := time.Parse(time.DateOnly, d.val)
		if err != nil {
			s.fail(c, service.BadParameter(d.name, "%s: %q is not a date like 2026-10-12", d.name, d.val))
			return
		}
		// to is the last day included; the filter's To is exclusive.
		*d.into = t.AddDate(0, 0, d.add)
	}
	if !f.From.IsZero() && !f.To.IsZero() && !f.From.Before(f.To) {
		s.fail(c, service.BadParameter("to", "to: %s is before from (%s)", q.To, q.From))
		return
	}
	assays, err := s.svc.Assays(ctx)
	if err != nil {
		s.fail(c, err)
		return
	}
	if q.Assay != "" && !knownAssay(assays, q.Assay) {
		s.fail(c, service.BadParameter("assay", "assay: there is no assay %q", q.Assay))
		return
	}
	list, err := s.svc.Plates(ctx, f)
	if err != nil {
		s.fail(c, err)
		return
	}
	d := platesData{Search: q, Assays: assays}
	if f.Cursor != "" {
		d.First = q.href("")
	}
	if d.Plates, err = plateRows(list); err != nil {
		s.fail(c, err)
		return
	}
	if list.NextCursor != "" {
		d.Next = q.href(list.NextCursor)
	}
	s.render(c, http.StatusOK, "plates", "Plates", d)
}

// href is the address of the search's page that starts after cursor.
func (q plateSearch) href(cursor string) string {
	v := url.Values{}
	for k, x := range map[string]string{"barcode": q.Barcode, "assay": q.Assay, "from": q.From, "to": q.To, "cursor": cursor} {
		if x != "" {
			v.Set(k, x)
		}
	}
	if len(v) == 0 {
		return "/plates"
	}
	return "/plates?" + v.Encode()
}

func knownAssay(as []wire.CatalogueEntry, id string) bool {
	for _, a := range as {
		if a.ID == id {
			return true
		}
	}
	return false
}
