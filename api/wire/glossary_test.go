package wire

import (
	"testing"

	"sluice/fit"
	"sluice/fit/potency"
	"sluice/fit/schild"
)

// Every flag the engine can put on a curve or a Schild analysis, and every
// reason a run leaves a summary, has its words; the glossary names no flag
// the engine does not have.
func TestGlossaryComplete(t *testing.T) {
	flags := []string{fit.FlagTooFewPoints, fit.FlagFitFailed, fit.FlagParameterAtBound, fit.FlagHillAtBound,
		fit.FlagEC50OutsideRange, fit.FlagTopNotReached, fit.FlagBottomNotReached, fit.FlagNoResponse,
		fit.FlagBootstrapFailures, fit.FlagBootstrapAtBound, fit.FlagEC50AtLimit, fit.FlagImplausibleConc,
		fit.FlagAICcUndefined, fit.FlagShapeNotAdmitted,
		schild.FlagInsurmountable, schild.FlagNonParallel, schild.FlagSlopeNotUnity, schild.FlagNoShift,
		schild.FlagCurveFailed, schild.FlagFewConcentration}
	known := map[string]bool{}
	for _, f := range flags {
		known[f] = true
		if len(FlagMeanings[f]) < 20 {
			t.Errorf("flag %s has no explanation: %q", f, FlagMeanings[f])
		}
	}
	for f := range FlagMeanings {
		if !known[f] {
			t.Errorf("the glossary explains %s, which the engine does not emit", f)
		}
	}
	if got := FlagMeaning("made_up_flag"); got == "" || got == FlagMeanings[fit.FlagFitFailed] {
		t.Errorf("an unknown flag reads %q", got)
	}
	for _, r := range []potency.Reason{potency.ReasonSuperseded, potency.ReasonRejected, potency.ReasonPlateQCFailed,
		potency.ReasonInactive, potency.ReasonInconclusive, potency.ReasonQualified} {
		if ExclusionMeanings[string(r)] == "" {
			t.Errorf("exclusion reason %s has no words", r)
		}
	}
	if len(ExclusionMeanings) != 6 {
		t.Errorf("%d exclusion reasons explained, want the 6 fit/potency gives", len(ExclusionMeanings))
	}
}
