package db

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"log/slog"
	"strings"
	"sync"
	"testing"
	"time"
)

// lockedBuffer is a bytes.Buffer safe for River's goroutines.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// The job queue logs through Options.Logger: a failing job's log line is
// JSON in the service's log, not River's text on standard output.
func TestQueueLogsThroughLogger(t *testing.T) {
	ctx := context.Background()
	var buf lockedBuffer
	s, err := openSQLite(ctx, t.TempDir(), Options{Logger: slog.New(slog.NewJSONHandler(&buf, nil))})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if err := s.Write(ctx, func(w Writer) error { _, err := w.EnqueueAnalysis(ctx, "fit", "x", JobOpts{}); return err }); err != nil {
		t.Fatal(err)
	}
	if err := s.StartHandlers(ctx, Handlers{Analysis: func(context.Context, string, string) error { return errors.New("boom-7") }}, 1); err != nil {
		t.Fatal(err)
	}
	defer s.StopWorkers(ctx)
	deadline := time.Now().Add(30 * time.Second)
	for !strings.Contains(buf.String(), "boom-7") {
		if time.Now().After(deadline) {
			t.Fatalf("no log of the failed job: %q", buf.String())
		}
		time.Sleep(20 * time.Millisecond)
	}
	for _, line := range strings.Split(strings.TrimSpace(buf.String()), "\n") {
		if !json.Valid([]byte(line)) {
			t.Errorf("not JSON: %q", line)
		}
	}
}
