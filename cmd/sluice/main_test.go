package main

import (
	"testing"

	"github.com/gin-gonic/gin"
	"go.uber.org/goleak"
)

// TestMain fails the package when a test leaves a goroutine running, e.g.
// a server, worker or store that serve did not stop. It sets gin's
// process-wide mode once, as main does, so that the servers the tests
// build do not print their routes.
func TestMain(m *testing.M) {
	gin.SetMode(gin.TestMode)
	goleak.VerifyTestMain(m)
}
