package service

import (
	"context"
	"errors"
	"fmt"
	"net/http"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/fit"
	"sluice/fit/schild"
)

// operationalApproach says how POST /v1/operational's numbers are made.
const operationalApproach = "E = Em·τⁿAⁿ/((KA + A)ⁿ + τⁿAⁿ) fitted to the partial agonist with Em fixed at the reference's fitted top " +
	"(bottom 0); KA and τ cannot be separated from a full agonist's curve alone"

// Operational is POST /v1/operational: the operational model (Black &
// Leff 1983) for a partial agonist, Em from the reference's fitted top
// (schild.OperationalFromReference). It stores nothing but the reply under
// its key.
func (s *Service) Operational(ctx context.Context, who Caller, idem *Idem, req *wire.OperationalRequest) (*Reply, error) {
	return s.write(ctx, who, idem, func(ctx context.Context) (plan, error) {
		r, err := operational(req)
		return plan{reply: r}, err
	})
}

// operational computes POST /v1/operational's reply.
func operational(req *wire.OperationalRequest) (*Reply, error) {
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		return nil, Invalid("/conc_unit", "%v", err)
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
	ref, err := points("reference", req.Reference)
	if err != nil {
		return nil, err
	}
	part, err := points("partial", req.Partial)
	if err != nil {
		return nil, err
	}
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
