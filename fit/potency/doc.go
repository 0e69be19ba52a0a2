// Package potency summarises potencies measured more than once: geometric
// means with their t intervals, a compound's potency history over runs, the
// minimum significant ratio (MSR) and the replicate-experiment study that
// qualifies an assay for production.
//
// Potencies are averaged on the log scale, where they are close to
// symmetric while raw EC50s are skewed (FACTS §8), so the average of EC50s
// is the geometric mean
//
//	GM = 10^(mean of log10 EC50),   pEC50 mean = −mean of log10 EC50,
//
// and a t interval on the log mean back-transforms to an asymmetric interval
// on the molar scale.
//
// The MSR is the smallest ratio of two single-run potencies of one compound
// that is statistically significant (Eastwood et al. 2006, J Biomol Screen
// 11:253; the Assay Guidance Manual's chapter on MSR). With s the
// between-run SD of log10 potency, the difference of two runs has SD s·√2,
// and two of those make the 95 % limit:
//
//	MSR = 10^(2·√2·s)
//
// The replicate-experiment study compares two runs of the same compounds
// directly (see Replicate).
//
// Inputs are plain values and records; the package knows nothing of how
// they are stored. Concentrations are molar, logs base 10.
package potency
