package api

import (
	"bytes"
	"context"
	"fmt"
	"log/slog"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"

	"sluice/db/dbtest"
)

// A client that goes away mid-request is not a 500 and not an ERROR log:
// the cancellation that reaches writeProblem is answered 499 and logged at
// debug level; the same error with the client still there is a 500.
func TestClientGoneIsNoServerError(t *testing.T) {
	var logs bytes.Buffer
	srv, err := New(Config{}, Deps{Store: dbtest.SQLite(t), Registry: prometheus.NewRegistry(),
		Log: slog.New(slog.NewJSONHandler(&logs, &slog.HandlerOptions{Level: slog.LevelInfo}))})
	if err != nil {
		t.Fatal(err)
	}
	cause := fmt.Errorf("fit: bootstrap: %w", context.Canceled)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	w := httptest.NewRecorder()
	c, _ := gin.CreateTestContext(w)
	c.Request = httptest.NewRequest("POST", "/v1/fits", nil).WithContext(ctx)
	srv.writeProblem(c, cause)
	if c.Writer.Status() != statusClientClosed || strings.Contains(logs.String(), "ERROR") {
		t.Errorf("client gone: %d, log %q", c.Writer.Status(), logs.String())
	}
	// The client is still there: the server's own cancellation is an error.
	w = httptest.NewRecorder()
	c, _ = gin.CreateTestContext(w)
	c.Request = httptest.NewRequest("POST", "/v1/fits", nil)
	srv.writeProblem(c, cause)
	if w.Code != 500 || !strings.Contains(logs.String(), "ERROR") {
		t.Errorf("server cancelled: %d, log %q", w.Code, logs.String())
	}
}
