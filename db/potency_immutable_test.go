package db_test

import (
	"strings"
	"testing"
)

// Review events, refit records and MSR studies are appended, never
// changed: the schema refuses UPDATE and DELETE on both engines.
func TestPotencyRecordsImmutable(t *testing.T) {
	for name, open := range map[string]func(*testing.T) rawDB{"sqlite": migratedSQLite, "postgres": migratedPostgres} {
		t.Run(name, func(t *testing.T) {
			raw := open(t)
			const at = "'2026-11-03T09:30:00.000000Z'"
			for _, q := range []string{
				"INSERT INTO assays (id, name, target, readout, units, created_at, created_by) VALUES ('a', 'a', '', '', '', " + at + ", 'x')",
				"INSERT INTO curve_results (id, kind, measured_at, created_at, submitted_by, model, status, engine_version, input_sha256, settings, input, result) " +
					"VALUES ('r1', 'fit', " + at + ", " + at + ", 'x', 'hill', 'converged', '0', '0', '{}', '{}', '{}')",
				"INSERT INTO curve_results (id, kind, measured_at, created_at, submitted_by, refit_of, model, status, engine_version, input_sha256, settings, input, result) " +
					"VALUES ('r2', 'fit', " + at + ", " + at + ", 'x', 'r1', 'hill', 'converged', '0', '0', '{}', '{}', '{}')",
				"INSERT INTO curve_reviews (id, curve_id, decision, reason, actor, at) VALUES ('v1', 'r1', 'rejected', 'why', 'x', " + at + ")",
				"INSERT INTO curve_refits (curve_id, refit_of, exclusions, reason) VALUES ('r2', 'r1', '[1]', 'why')",
				"INSERT INTO msr_studies (id, assay_id, created_at, created_by, request, result) VALUES ('m1', 'a', " + at + ", 'x', '{}', '{}')",
			} {
				if err := raw.exec(q); err != nil {
					t.Fatalf("%s: %v", q, err)
				}
			}
			for _, q := range []string{
				"UPDATE curve_reviews SET decision = 'accepted'", "DELETE FROM curve_reviews",
				"UPDATE curve_refits SET reason = 'x'", "DELETE FROM curve_refits",
				"UPDATE msr_studies SET result = '{}'", "DELETE FROM msr_studies",
			} {
				if err := raw.exec(q); err == nil || !strings.Contains(err.Error(), "immutable") {
					t.Errorf("%s: %v, want the immutability trigger's refusal", q, err)
				}
			}
			// A review's decision is one of two.
			if err := raw.exec("INSERT INTO curve_reviews (id, curve_id, decision, reason, actor, at) VALUES ('v2', 'r1', 'maybe', '', 'x', " + at + ")"); err == nil {
				t.Error("a review with decision 'maybe' was stored")
			}
		})
	}
}
