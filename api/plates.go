package api

import (
	"bytes"
	"context"
	"mime"
	"net/http"
	"strconv"
	"time"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/api/service"
	"sluice/api/wire"
	"sluice/db"
)

// createPlate is POST /v1/plates: JSON, long CSV (text/csv), or a reader
// grid (text/csv with ?layout_id=). It decodes the body into a submission
// and the service stores the plate, its wells and its fit job in one
// transaction: 202 {plate_id, job_id}. ?wait=30s submits, then waits up to
// that long for the fits: 200 with the finished plate, or the 202. wait is
// not part of the request's idempotency, so a retry with or without it
// replays the same plate.
func (s *Server) createPlate(c *gin.Context) {
	var wait time.Duration
	if w := c.Query("wait"); w != "" {
		d, err := time.ParseDuration(w)
		if err != nil || d < 0 || d > service.MaxWait {
			s.writeProblem(c, badParameter("wait", "%q is not a duration up to %v (e.g. 30s)", w, service.MaxWait))
			return
		}
		wait = d
	}
	body, err := readBody(c)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	sub, err := plateSubmission(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	idem, err := idemOf(c, body)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	ctx := c.Request.Context()
	r, acc, err := s.svc.SubmitPlate(ctx, callerOf(c), idem, sub)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	if wait > 0 {
		// The wait ends early when the caller goes away or the server
		// shuts down (Drain): the plate is stored and queued either way.
		waitCtx, cancel := context.WithCancel(ctx)
		defer cancel()
		defer context.AfterFunc(s.draining, cancel)()
		v, err := s.svc.WaitPlate(waitCtx, acc.PlateID, wait)
		switch {
		case ctx.Err() != nil:
			return // no one to answer
		case waitCtx.Err() != nil:
			// Draining: answer with where to look.
		case err != nil:
			s.writeProblem(c, err)
			return
		case v != nil:
			c.JSON(http.StatusOK, v)
			return
		}
	}
	writeReply(c, r)
}

// plateSubmission decodes a plate in any of its three forms.
func plateSubmission(c *gin.Context, body []byte) (*service.PlateSubmission, error) {
	mt := ""
	if ct := c.GetHeader("Content-Type"); ct != "" {
		var err error
		if mt, _, err = mime.ParseMediaType(ct); err != nil {
			return nil, &service.Error{Kind: errUnsupportedType, Detail: "Content-Type: want application/json or text/csv"}
		}
	}
	sub := &service.PlateSubmission{Raw: body}
	switch mt {
	case "", "application/json":
		if err := decodeJSON(body, &sub.Plate); err != nil {
			return nil, err
		}
		return sub, nil
	case "text/csv", "application/csv":
	default:
		return nil, &service.Error{Kind: errUnsupportedType, Detail: "Content-Type: want application/json or text/csv"}
	}
	q := c.Request.URL.Query()
	req := &sub.Plate
	req.AssayID, req.Barcode, req.MeasuredAt, req.ConcUnit, req.Mode =
		q.Get("assay_id"), q.Get("barcode"), q.Get("measured_at"), q.Get("conc_unit"), q.Get("mode")
	var err error
	if req.Format, err = strconv.Atoi(q.Get("format")); err != nil {
		return nil, badParameter("format", "format (96, 384 or 1536) is required as a query parameter")
	}
	if req.Fit, err = fitFromQuery(q.Get); err != nil {
		return nil, err
	}
	if sub.LayoutID = q.Get("layout_id"); sub.LayoutID != "" {
		// The grid is read against its layout's format, by the service.
		sub.Form = service.PlateGrid
		return sub, nil
	}
	sub.Form = service.PlateCSV
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		return nil, badParameter("conc_unit", "%v", err)
	}
	sub.Wells, unit, err = ingest.ReadPlateCSV(bytes.NewReader(body), unit, "the conc_unit query parameter")
	req.ConcUnit = unit.String()
	return sub, err
}

// fitFromQuery reads the fit settings of a CSV upload.
func fitFromQuery(get func(string) string) (*wire.PlateFit, error) {
	f := &wire.PlateFit{Model: get("model")}
	if r := get("resamples"); r != "" || get("seed") != "" || get("scheme") != "" || get("interval") != "" {
		b := &wire.BootstrapIn{Scheme: get("scheme"), Interval: get("interval")}
		if r != "" {
			n, err := strconv.Atoi(r)
			if err != nil {
				return nil, badParameter("resamples", "%q is not a whole number", r)
			}
			b.Resamples = n
		}
		if sd := get("seed"); sd != "" {
			n, err := strconv.ParseUint(sd, 10, 64)
			if err != nil {
				return nil, badParameter("seed", "%q is not a whole number ≥ 0", sd)
			}
			b.Seed = &n
		}
		f.Bootstrap = b
	}
	return f, nil
}

// createLayout is POST /v1/layouts: a plate map (wells → role, compound,
// concentration) reused by reader-grid uploads.
func (s *Server) createLayout(c *gin.Context) { handleJSONWrite(s, c, s.svc.CreateLayout) }

// getLayout is GET /v1/layouts/{id}.
func (s *Server) getLayout(c *gin.Context) {
	v, err := s.svc.Layout(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}

// listLayouts is GET /v1/layouts.
func (s *Server) listLayouts(c *gin.Context) {
	ls, err := s.svc.Layouts(c.Request.Context())
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, gin.H{"layouts": ls})
}

// getPlate is GET /v1/plates/{id}.
func (s *Server) getPlate(c *gin.Context) {
	v, err := s.svc.Plate(c.Request.Context(), c.Param("id"))
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}

// getJob is GET /v1/jobs/{id}.
func (s *Server) getJob(c *gin.Context) {
	id, err := strconv.ParseInt(c.Param("id"), 10, 64)
	if err != nil {
		s.writeProblem(c, &service.Error{Kind: db.ErrNotFound, Detail: "no job " + c.Param("id")})
		return
	}
	v, err := s.svc.Job(c.Request.Context(), id)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	c.JSON(http.StatusOK, v)
}
