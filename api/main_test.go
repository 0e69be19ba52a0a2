package api

import (
	"testing"

	"go.uber.org/goleak"
)

// TestMain fails the package when a test leaves a goroutine running: a
// plate job, a River client, a pool or a handler's helper that outlives
// its test.
func TestMain(m *testing.M) {
	goleak.VerifyTestMain(m)
}
