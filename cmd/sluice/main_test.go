package main

import (
	"testing"

	"go.uber.org/goleak"
)

// TestMain fails the package when a test leaves a goroutine running, e.g.
// a server, worker or store that serve did not stop.
func TestMain(m *testing.M) {
	goleak.VerifyTestMain(m)
}
