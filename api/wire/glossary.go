package wire

// FlagMeanings says in words what each flag the engine puts on a result
// means (fit.Flag* on a curve, schild.Flag* on a Schild analysis) and what
// to look at; the dashboard shows them beside a curve, and the API could
// answer them too. A test keeps it complete.
var FlagMeanings = map[string]string{
	// fit.Result flags.
	"too_few_points": "There are no more points than free parameters, so the curve could not be fitted at all.",
	"fit_failed":     "The fit did not reach a least-squares solution; no parameter can be read from it.",
	"parameter_at_bound": "At least one parameter ended on the limit it is allowed to take: the data do not pin it down, " +
		"and its interval is not meaningful.",
	"hill_at_bound": "The Hill slope ended on its limit (a very steep or very shallow curve): check for a single step " +
		"between two concentrations or for too few points on the slope.",
	"ec50_outside_tested_range": "The fitted EC50 lies outside the tested concentrations: it is an extrapolation, " +
		"and the potency is reported as a bound (> or <) rather than a value.",
	"top_not_reached": "The data do not reach the upper plateau (less than 80% of the fitted window is covered at the " +
		"high end, common practice): the top is extrapolated and the EC50 is uncertain.",
	"bottom_not_reached": "The data do not reach the lower plateau (less than 80% of the fitted window is covered at " +
		"the low end, common practice): the bottom is extrapolated and the EC50 is uncertain.",
	"no_response": "The curve fits no better than a flat line (F test): the compound is called inactive and has no potency.",
	"bootstrap_refits_failed": "Some bootstrap resamples could not be refitted; the bootstrap intervals rest on the " +
		"others and may be too narrow.",
	"bootstrap_resamples_at_bound": "Some bootstrap refits ended with a parameter on its limit; the bootstrap interval " +
		"of that parameter is cut off there.",
	"ec50_at_search_limit": "The EC50 ended on the edge of the range it is searched in (the tested range widened): " +
		"the data do not locate it.",
	"implausible_concentration": "A concentration or the EC50 lies outside the range plausible for a drug (1 fM to " +
		"100 mM): most often a unit mistake; see the notes.",
	"aicc_undefined": "There are too few points for the small-sample information criterion (AICc needs more points " +
		"than parameters plus one), so models cannot be compared by it.",
	"shape_not_admitted": "The best solution has a shape the model's parameters do not describe (for a bell curve: a " +
		"dip, or the decline before the rise); see the notes and the comparison with the Hill equation.",
	// schild.Result flags.
	"insurmountable": "The antagonist lowers the maximum response as well as shifting the curve: not simple " +
		"competitive antagonism, so the Schild analysis does not apply as it stands.",
	"non_parallel": "A curve's Hill slope differs from the control's by more than the allowed ratio: the curves are " +
		"not parallel, as competitive antagonism requires.",
	"schild_slope_not_unity": "The global fit's Schild slope is not compatible with 1: the antagonism is not simple " +
		"competition at equilibrium, so no pKB is reported (pA2 is not an affinity then).",
	"dose_ratio_not_above_one": "At some antagonist concentration the agonist curve did not shift right (dose ratio " +
		"not above 1), so that point cannot enter the Schild plot.",
	"curve_fit_failed": "An agonist curve could not be fitted or shows no response, so it gives no dose ratio " +
		"(without the control curve there is no analysis).",
	"too_few_antagonist_concentrations": "Fewer than two antagonist concentrations shifted the curve (dose ratio " +
		"above 1): a Schild regression needs at least two.",
}

// ExclusionMeanings says in words why a run is left out of a potency
// summary, for each reason fit/potency gives.
var ExclusionMeanings = map[string]string{
	"superseded":      "a refit of this curve replaced it",
	"rejected":        "rejected on review",
	"plate_qc_failed": "its plate failed QC",
	"inactive":        "called inactive: no potency",
	"inconclusive":    "the activity call is inconclusive",
	"qualified":       "the potency is a bound (> or <), not a value",
}

// FlagMeaning is FlagMeanings[flag], or a plain note for a flag it does
// not know (a newer engine's).
func FlagMeaning(flag string) string {
	if m, ok := FlagMeanings[flag]; ok {
		return m
	}
	return "No explanation is recorded for this flag."
}
