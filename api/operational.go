package api

import (
	"encoding/json"
	"net/http"

	"github.com/gin-gonic/gin"

	"sluice/api/ingest"
	"sluice/api/wire"
	"sluice/fit"
	"sluice/fit/schild"
)

// OperationalRequest is the body of POST /v1/operational: a full agonist's
// curve (the reference, which fixes the system maximum Em) and a partial
// agonist's curve on the same assay, concentrations in conc_unit.
type OperationalRequest struct {
	ConcUnit   string         `json:"conc_unit,omitempty"`
	Reference  []wire.PointIn `json:"reference"`
	Partial    []wire.PointIn `json:"partial"`
	Confidence float64        `json:"confidence,omitempty"`
}

// OperationalResponse gives τ and KA of the partial agonist.
type OperationalResponse struct {
	Em       float64       `json:"em"`
	Tau      *WireEstimate `json:"tau"`
	LogTau   *WireEstimate `json:"log_tau"`
	KA       *WireEstimate `json:"ka"`
	PKA      float64       `json:"pka"`
	Slope    *WireEstimate `json:"slope"`
	EC50     float64       `json:"ec50"`
	Emax     float64       `json:"emax"`
	Caution  string        `json:"caution"`
	Approach string        `json:"approach"`
}

// postOperational is POST /v1/operational: the operational model (Black &
// Leff 1983) for a partial agonist, Em from the reference's fitted top.
func (s *Server) postOperational(c *gin.Context) {
	var req OperationalRequest
	if _, ok := s.readJSON(c, &req); !ok {
		return
	}
	unit, err := ingest.ParseUnit(req.ConcUnit)
	if err != nil {
		s.writeProblem(c, invalidField("/conc_unit", "%v", err))
		return
	}
	points := func(name string, in []wire.PointIn) ([]fit.Point, error) {
		if len(in) < 5 {
			return nil, invalidField("/"+name, "give at least 5 points")
		}
		var out []fit.Point
		for i, p := range in {
			if p.Conc == nil || p.Response == nil || !(*p.Conc >= 0) {
				return nil, invalidField("/"+name+"/"+itoa(i), "conc (≥ 0) and response are required")
			}
			out = append(out, fit.Point{Conc: unit.ToMolar(*p.Conc), Response: *p.Response})
		}
		return out, nil
	}
	ref, err := points("reference", req.Reference)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	part, err := points("partial", req.Partial)
	if err != nil {
		s.writeProblem(c, err)
		return
	}
	rf, err := fit.Fit(fit.Curve{Points: ref}, &fit.Settings{Model: fit.Hill, Fixed: map[string]float64{"bottom": 0}})
	if err != nil || !rf.Converged() {
		s.writeProblem(c, invalidField("/reference", "the reference curve did not fit"))
		return
	}
	em := rf.Top().Estimate
	o, err := schild.FitOperational(part, em, req.Confidence)
	if err != nil {
		s.writeProblem(c, invalidField("/partial", "%v", err))
		return
	}
	n := o.Slope.Estimate
	out := OperationalResponse{Em: em, Tau: wireEst(o.Tau, false), LogTau: wireEst(o.LogTau, true), KA: wireEst(o.KA, false),
		PKA: -o.LogKA.Estimate, Slope: wireEst(o.Slope, true),
		EC50: schild.OperationalEC50(o.KA.Estimate, o.Tau.Estimate, n), Emax: schild.OperationalEmax(em, o.Tau.Estimate, n),
		Caution: wire.Caution,
		Approach: "E = Em·τⁿAⁿ/((KA + A)ⁿ + τⁿAⁿ) fitted to the partial agonist with Em fixed at the reference's fitted top " +
			"(bottom 0); KA and τ cannot be separated from a full agonist's curve alone"}
	b, _ := json.Marshal(out)
	s.respond(c, http.StatusOK, "application/json", b, nil)
}

func itoa(i int) string {
	b, _ := json.Marshal(i)
	return string(b)
}
