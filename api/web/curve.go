package web

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"strconv"
	"strings"

	"github.com/gin-gonic/gin"

	"sluice/api/figure"
	"sluice/api/service"
	"sluice/api/status"
	"sluice/api/wire"
)

// curveData is what the curve page shows: the API's view of the curve,
// its result read, its points named as a refit names them, the flags in
// words, and the version that replaced it.
type curveData struct {
	// FormKey is a fresh key per drawn page: its forms send it as their
	// idempotency key, so a double click or a resent form stores one
	// review or one refit, not two.
	FormKey string
	Curve   *wire.Curve
	Result  wire.FitResult
	// Points can be left out by a refit; Excluded were left out before.
	Points, Excluded []curvePoint
	Flags            []flagNote
	SupersededBy     string
	// Problem is a refused form's reason, shown above the forms.
	Problem string
	// Reason and Decision keep what a refused form held.
	Reason, Decision string
	// ConfidencePct names the intervals' level ("95%"); ExcludedWhy says
	// in words why the curve is left out of histories.
	ConfidencePct, ExcludedWhy string
}

// curvePoint is one point of a curve: its name in a refit (an index or a
// well), molar concentration (0 for the vehicle) and response.
type curvePoint struct {
	Name           string
	Conc, Response float64
	Checked        bool
}

// flagNote is a flag with its meaning in words (wire.FlagMeanings).
type flagNote struct{ Flag, Meaning string }

// curvePage is GET /curves/:id.
func (s *Site) curvePage(c *gin.Context) {
	d, err := s.curveData(c, c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	s.renderCaution(c, http.StatusOK, "curve", curveTitle(d), d)
}

// curveData reads what the curve page shows through the use cases.
func (s *Site) curveData(c *gin.Context, id string) (*curveData, error) {
	ctx := c.Request.Context()
	cv, err := s.svc.Curve(ctx, id)
	if err != nil {
		return nil, err
	}
	pts, err := s.svc.CurveData(ctx, id)
	if err != nil {
		return nil, err
	}
	d := &curveData{FormKey: "web-" + secret(), Curve: cv, Result: pts.Result, ConfidencePct: percent(float64(pts.Result.Confidence))}
	if !cv.Usable {
		d.ExcludedWhy = wire.ExclusionMeanings[cv.Excluded]
		if d.ExcludedWhy == "" {
			d.ExcludedWhy = cv.Excluded
		}
	}
	for i, p := range pts.Points {
		d.Points = append(d.Points, curvePoint{Name: pts.Names[i], Conc: p.Conc, Response: p.Response})
	}
	for i, p := range pts.Excluded {
		d.Excluded = append(d.Excluded, curvePoint{Name: pts.ExcludedNames[i], Conc: p.Conc, Response: p.Response})
	}
	for _, f := range pts.Result.Flags {
		d.Flags = append(d.Flags, flagNote{Flag: f, Meaning: wire.FlagMeaning(f)})
	}
	if cv.Superseded {
		if d.SupersededBy, err = s.svc.SupersededBy(ctx, id); err != nil {
			return nil, err
		}
	}
	return d, nil
}

func curveTitle(d *curveData) string {
	if d.Curve.CompoundID != "" {
		return "Curve of " + d.Curve.CompoundID
	}
	return "Curve " + d.Curve.ID
}

// curvePlot is GET /curves/:id/plot.svg: the API's drawing of the curve
// (figure.StoredCurve), served under the session.
func (s *Site) curvePlot(c *gin.Context) {
	d, err := s.svc.CurveData(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.fail(c, err)
		return
	}
	s.writeFigure(c, figure.StoredCurve(d))
}

// writeFigure sends a figure as SVG; a drawing error is a 500 page.
func (s *Site) writeFigure(c *gin.Context, fig interface{ Write(io.Writer) error }) {
	var buf bytes.Buffer
	if err := fig.Write(&buf); err != nil {
		s.fail(c, fmt.Errorf("draw %s: %w", c.Request.URL.Path, err))
		return
	}
	c.Header("Cache-Control", "no-store")
	c.Data(http.StatusOK, "image/svg+xml", buf.Bytes())
}

// curveReview is POST /curves/:id/review: the form's decision and reason
// go to service.Review; on success back to the curve, refused (a reason
// missing to reject, …) the page again with the reason why.
func (s *Site) curveReview(c *gin.Context) {
	id := c.Param("id")
	req := &wire.ReviewRequest{Decision: c.PostForm("decision"), Reason: c.PostForm("reason")}
	idem, err := formIdem(c, "POST /v1/curves/:id/review", id, req)
	if err != nil {
		s.fail(c, err)
		return
	}
	if _, err := s.svc.Review(c.Request.Context(), viewer(c), idem, id, req); err != nil {
		s.refused(c, id, err, func(d *curveData) { d.Decision, d.Reason = req.Decision, req.Reason })
		return
	}
	c.Redirect(http.StatusSeeOther, "/curves/"+id+"#review")
}

// curveRefit is POST /curves/:id/refit: the ticked points (the exclude
// fields: a single fit's indices, a plate curve's wells) and the reason
// go to service.Refit; on success to the new version's page.
func (s *Site) curveRefit(c *gin.Context) {
	id := c.Param("id")
	names := c.PostFormArray("exclude")
	req := &wire.RefitRequest{Reason: c.PostForm("reason")}
	for _, n := range names {
		req.Exclude = append(req.Exclude, excludeName(n))
	}
	idem, err := formIdem(c, "POST /v1/curves/:id/refit", id, req)
	if err != nil {
		s.fail(c, err)
		return
	}
	r, err := s.svc.Refit(c.Request.Context(), viewer(c), idem, id, req)
	if err != nil {
		s.refused(c, id, err, func(d *curveData) {
			d.Reason = req.Reason
			for i := range d.Points {
				for _, n := range names {
					d.Points[i].Checked = d.Points[i].Checked || n == d.Points[i].Name
				}
			}
		})
		return
	}
	if r.Status == http.StatusAccepted {
		// Over the synchronous budget: the refit runs as a job.
		s.render(c, http.StatusAccepted, "queued", "Refit queued", queuedData{Of: id, Location: r.Location})
		return
	}
	next := strings.TrimPrefix(r.Location, "/v1/curves/")
	if next == r.Location || next == "" {
		s.fail(c, fmt.Errorf("refit of %s answered no curve (location %q)", id, r.Location))
		return
	}
	c.Redirect(http.StatusSeeOther, "/curves/"+next)
}

// formIdem is a form's idempotency: its key field (FormKey) over the
// route, the curve and the request as the API's idempotency would hash
// them; nil when the form sent no key.
func formIdem(c *gin.Context, route, id string, req any) (*service.Idem, error) {
	body, err := json.Marshal(req)
	if err != nil {
		return nil, err
	}
	return service.NewIdem(c.PostForm("key"), route, map[string]string{"id": id}, body)
}

// queuedData is the page for a refit left to the job queue.
type queuedData struct{ Of, Location string }

// excludeName is a form's point name as the refit request names it: a
// whole number is a single fit's index, anything else a well's name
// (quoted); the use case says which it expected.
func excludeName(n string) json.RawMessage {
	n = strings.TrimSpace(n)
	if k, err := strconv.Atoi(n); err == nil && k >= 0 {
		return json.RawMessage(strconv.Itoa(k))
	}
	b, _ := json.Marshal(n)
	return b
}

// refused answers a form the use case refused: a 4xx shows the curve page
// again with the reason and what the form held (keep); anything else
// goes to fail.
func (s *Site) refused(c *gin.Context, id string, err error, keep func(*curveData)) {
	code := status.Of(err)
	if code >= 500 || code == http.StatusNotFound {
		s.fail(c, err)
		return
	}
	d, lerr := s.curveData(c, id)
	if lerr != nil {
		s.fail(c, lerr)
		return
	}
	d.Problem = err.Error()
	keep(d)
	s.renderCaution(c, code, "curve", curveTitle(d), d)
}

// percent names a confidence level: 0.95 → "95%".
func percent(level float64) string {
	if !(level > 0 && level < 1) {
		return "confidence"
	}
	return strconv.FormatFloat(math.Round(1e4*level)/100, 'f', -1, 64) + "%"
}
