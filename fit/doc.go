// Package fit fits concentration–response curves: the four-parameter Hill
// equation and its fixed-parameter variants, the asymmetric five-parameter
// (Richards) logistic and the bell-shaped activation × block curve, by
// weighted least squares (package fit/lm), with self-starting values, derived
// potencies, flags in plain words, model comparison and bootstrap intervals
// (package fit/boot).
//
// Concentrations are molar; a vehicle point (concentration 0) is valid data
// and evaluates to the zero-concentration plateau exactly. Potencies are fitted
// on the log scale, log_ec50 = log10(EC50/M).
//
// Replicates that share a concentration share a model value and a Jacobian
// row, so the fit works on the weighted mean at each concentration: with
// Wₗ = Σⱼ wₗⱼ and ȳₗ = Σⱼ wₗⱼyₗⱼ/Wₗ,
//
//	Σₗⱼ wₗⱼ(yₗⱼ − f(xₗ))² = Σₗ Wₗ(ȳₗ − f(xₗ))² + Σₗⱼ wₗⱼ(yₗⱼ − ȳₗ)²,
//
// an exact identity whose last term (the pure-error sum of squares) does not
// depend on the parameters. Estimates, RSS and covariance are therefore those
// of the full data, at a fraction of the cost.
package fit
