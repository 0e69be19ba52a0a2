// Package boot holds the model-free parts of bootstrap inference: seeded
// per-resample random streams, a parallel driver whose results do not depend
// on the number of workers, and percentile and BCa intervals with jackknife
// acceleration (Efron 1987, JASA 82:171; DiCiccio & Efron 1996, Stat Sci
// 11:189; Efron & Tibshirani 1993, An Introduction to the Bootstrap, ch. 14).
package boot
