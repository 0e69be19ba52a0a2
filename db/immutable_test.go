package db

import (
	"context"
	"strings"
	"testing"
	"time"
)

// Stored runs are immutable: the schema itself refuses UPDATE and DELETE.
func TestFitRunsImmutableSQLite(t *testing.T) {
	ctx := context.Background()
	s, err := openSQLite(ctx, t.TempDir(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	err = s.Write(ctx, func(w Writer) error {
		return w.InsertFitRun(ctx, &FitRun{ID: "r1", CreatedAt: time.Now(), SubmittedBy: "x", Model: "hill", Status: "converged",
			EngineVersion: "0", InputSHA256: "0", Settings: []byte("{}"), Input: []byte("{}"), Result: []byte("{}"),
			Params: []FitParam{{Name: "top"}}})
	})
	if err != nil {
		t.Fatal(err)
	}
	for _, q := range []string{"UPDATE curve_results SET status = 'x'", "DELETE FROM curve_results", "UPDATE curve_results SET params = '[]'"} {
		if _, err := s.e.exec(ctx, q); err == nil || !strings.Contains(err.Error(), "immutable") {
			t.Errorf("%s: %v, want the immutability trigger's refusal", q, err)
		}
	}
}
