package wire

import "sluice/fit/schild"

// SchildFlagWords says in words what a Schild analysis' flag
// (fit/schild's Flag… constants) means for the reader; "" for a flag it
// does not know, which the caller then shows as it is.
func SchildFlagWords(flag string) string {
	switch flag {
	case schild.FlagInsurmountable:
		return "a curve's maximum response fell by more than the tolerance (20 % of the control's window unless set otherwise): the antagonist depresses the maximum, so it is not surmountable"
	case schild.FlagNonParallel:
		return "a curve's Hill slope differs from the control's by more than the allowed factor (1.5 unless set otherwise): the shift is not parallel"
	case schild.FlagSlopeNotUnity:
		return "the Schild slope differs significantly from 1, so the antagonism is not simple competition and no pKB is given"
	case schild.FlagNoShift:
		return "at some antagonist concentration the agonist curve did not move to the right (dose ratio not above 1); that point is left out of the Schild plot"
	case schild.FlagCurveFailed:
		return "an agonist curve did not fit or shows no response, so it gives no dose ratio"
	case schild.FlagFewConcentration:
		return "fewer than two antagonist concentrations shifted the curve, too few for a Schild regression"
	}
	return ""
}
