package db_test

import (
	"testing"

	"go.uber.org/goleak"
)

// Every test of the store must leave no goroutine behind: connections,
// River's clients and workers all stop with the store.
func TestMain(m *testing.M) {
	goleak.VerifyTestMain(m)
}
