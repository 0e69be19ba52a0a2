package service

import (
	"context"
	"errors"
	"fmt"
	"net/http"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/fit"
	"sluice/fit/cost"
	"sluice/fit/schild"
)

// operationalApproach says how POST /v1/operational's numbers are made.
const operationalApproach = "E = Em·τⁿAⁿ/((KA + A)ⁿ + τⁿAⁿ) fitted to the partial agonist with Em fixed at the reference's fitted top " +
	"(bottom 0); KA and τ cannot be separated from a full agonist's curve alone"

// Operational is POST /v1/operational: the operational model (Black &
// Leff 1983) for a partial agonist, Em from the reference's fitted top
// (schild.OperationalFromReference). It stores nothing, not even its reply
// under its key (calculate); one over the synchronous budget is queued
// (202).
func (s *Service) Operational(ctx context.Context, who Caller, idem *Idem, req *wire.OperationalRequest) (*Reply, error) {
	return s.calculate(ctx, who, idem, func(ctx context.Context) (plan, error) {
		ref, part, w, err := s.prepareOperational(req)
		if err != nil {
			return plan{}, err
		}
		if w > s.budget.Sync {
			return s.queue(who, analysisOperational, &queuedRequest{Operational: req}, w)
		}
		r, err := operational(req, ref, part)
		return plan{reply: r}, err
	})
}

// prepareOperational validates a request and checks its work against the
// hard limit. The work is estimated from fit.Cost as
//
//	W = fit.Cost(reference, 3) + 4·fit.Cost(partial, 3)
//
// the reference's Hill fit with its bottom fixed (3 parameters), and for
// the partial agonist its own Hill fit (the start) and the operational fit
// (3 parameters), whose Jacobian by central differences costs about six
// evaluations where fit's analytic one costs two: counted as three fits.
func (s *Service) prepareOperational(req *wire.OperationalRequest) (ref, part []fit.Point, w cost.Work, err error) {
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err == nil {
		unit, err = ingest.RequireUnit(unit, "conc_unit")
	}
	if err != nil {
		return nil, nil, 0, Invalid("/conc_unit", "%v", err)
	}
	if req.Confidence != 0 && !(req.Confidence > 0 && req.Confidence < 1) {
		return nil, nil, 0, Invalid("/confidence", "confidence must be in (0, 1)")
	}
	points := func(name string, in []wire.PointIn) ([]fit.Point, error) {
		out := make([]fit.Point, 0, len(in))
		for i, p := range in {
			if p.Conc == nil || p.Response == nil || !(*p.Conc >= 0) {
				return nil, Invalid(fmt.Sprintf("/%s/%d", name, i), "conc (≥ 0) and response are required")
			}
			out = append(out, fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response})
		}
		return out, nil
	}
	if ref, err = points("reference", req.Reference); err != nil {
		return nil, nil, 0, err
	}
	if part, err = points("partial", req.Partial); err != nil {
		return nil, nil, 0, err
	}
	wRef := fit.CostOf([]fit.Curve{{Points: ref}}, 3, nil)
	wPart := 4 * fit.CostOf([]fit.Curve{{Points: part}}, 3, nil)
	field := "/partial"
	if wRef > wPart {
		field = "/reference"
	}
	if err := s.budget.admit(wRef+wPart, field); err != nil {
		return nil, nil, 0, err
	}
	return ref, part, wRef + wPart, nil
}

// operational computes POST /v1/operational's reply for validated curves.
func operational(req *wire.OperationalRequest, ref, part []fit.Point) (*Reply, error) {
	o, err := schild.OperationalFromReference(ref, part, req.Confidence)
	var oe *schild.OperationalError
	if errors.As(err, &oe) {
		return nil, Invalid("/"+oe.Curve, "%v", oe.Err)
	}
	if err != nil {
		return nil, fmt.Errorf("operational fit: %w", err)
	}
	n := o.Slope.Estimate
	out := wire.OperationalResponse{Em: o.Em, Tau: wire.FromEstimate(o.Tau, false), LogTau: wire.FromEstimate(o.LogTau, true),
		KA: wire.FromEstimate(o.KA, false), PKA: -o.LogKA.Estimate, Slope: wire.FromEstimate(o.Slope, true),
		EC50: schild.OperationalEC50(o.KA.Estimate, o.Tau.Estimate, n), Emax: schild.OperationalEmax(o.Em, o.Tau.Estimate, n),
		Caution: wire.Caution, Approach: operationalApproach}
	return jsonReply(http.StatusOK, out, "")
}
