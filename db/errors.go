package db

import "errors"

// Errors of the store, whatever the engine.
var (
	// ErrNotFound: no record with that key.
	ErrNotFound = errors.New("not found")
	// ErrExists: a record with that key already exists.
	ErrExists = errors.New("already exists")
	// ErrReference: a referenced record (assay, compound, earlier run) does
	// not exist.
	ErrReference = errors.New("referenced record does not exist")
)
