package db

import (
	"context"
	"testing"
	"time"
)

// Stored runs are immutable: the schema itself refuses UPDATE and DELETE.
func TestFitRunsImmutableSQLite(t *testing.T) {
	ctx := context.Background()
	s, err := openSQLite(ctx, t.TempDir())
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
	for _, q := range []string{"UPDATE fit_runs SET status = 'x'", "DELETE FROM fit_runs", "UPDATE fit_params SET name = 'x'", "DELETE FROM fit_params"} {
		if _, err := s.e.exec(ctx, q); err == nil {
			t.Errorf("%s succeeded", q)
		}
	}
}
