package wire

// Caution is the research-use statement carried by every output with a
// potency or a prediction (common practice; FACTS §9).
const Caution = "For research use only; not for diagnosis, clinical dosing or treatment decisions. " +
	"Potencies, pKB/pA2 and predicted membrane-potential shifts are model estimates, valid only under " +
	"the stated assumptions (equilibrium, competitive mechanism, chord-conductance steady state, " +
	"entered ion concentrations); confirm them experimentally. Active QC flags are shown with their reasons."
