// Package plate holds microplate geometry, well roles, normalisation to the
// on-plate controls and screening quality control (Z′, signal window,
// signal/background, control CVs, edge and row/column patterns). It knows
// nothing of files or HTTP.
package plate
