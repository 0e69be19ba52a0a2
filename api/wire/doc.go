// Package wire holds the JSON objects Sluice reads and writes, shared by the
// HTTP API and the command line so that both speak the same contract.
package wire
