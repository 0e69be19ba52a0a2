// Package schild analyses competitive antagonism at ligand-gated channels:
// dose ratios from agonist curves shifted by an antagonist, the Schild
// regression (Arunlakshana & Schild 1959, Br J Pharmacol 14:48), the global
// Schild fit of all curves at once, by the Gaddum–Schild equation (Lew & Angus 1995, Trends
// Pharmacol Sci 16:328), detection of insurmountable or non-parallel
// antagonism (when Schild analysis is invalid), the functional
// Cheng–Prusoff correction (Leff & Dougall 1993, Trends Pharmacol Sci
// 14:110), and the operational model of agonism (Black & Leff 1983, Proc R
// Soc Lond B 220:141).
//
// Concentrations are molar; potencies are reported as p-values (−log10 M).
package schild
