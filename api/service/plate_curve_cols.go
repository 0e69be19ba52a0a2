package service

import (
	"sluice/api/wire"
	"sluice/db"
)

// logEC50Cols are a plate curve's log EC50 and its interval on the log
// scale (the bootstrap interval when bootstrapped, else Wald), for
// curves.csv; empty when the curve has none.
func logEC50Cols(pc wire.PlateCurve, num func(wire.Num) string) []string {
	for _, p := range pc.Params {
		if p.Name != "log_ec50" {
			continue
		}
		ci := p.WaldCI
		if p.BootCI != nil {
			ci = *p.BootCI
		}
		return []string{num(p.Estimate), num(ci[0]), num(ci[1])}
	}
	return []string{"", "", ""}
}

// plateVerdict is the plate's QC verdict: pass, fail, or "" when not
// assessed.
func plateVerdict(p *db.Plate) string {
	switch {
	case p.Figures == nil:
		return ""
	case p.Figures.Pass:
		return "pass"
	}
	return "fail"
}
