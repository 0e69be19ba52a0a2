// Package service holds Sluice's use cases, one method each: fit a curve,
// the catalogue, Schild and operational analyses, the membrane-potential
// prediction, and the plate use cases. Handlers, the web pages, the CLI's
// offline commands and the demo loader call this layer; it calls the
// domain rules in fit/* and the store through the small interfaces it
// declares (store.go).
//
// Every write goes through one path (idem.go): a stored reply for the
// request's Idempotency-Key is replayed before any work is done, and the
// reply of a new request is stored with its key in the same transaction as
// what the request wrote. A synchronous analysis is costed first (budget.go):
// over the hard limit it is refused naming the field that drives the cost,
// over the synchronous budget it is queued as a single-analysis job
// (queue.go) that RunAnalysis runs later. The service never imports gin or
// prometheus.
package service
