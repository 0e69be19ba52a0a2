package db_test

import (
	"fmt"
	"testing"
)

// The triggers of potency_stale mark an (assay, compound) pair whenever
// what its summary reads changes: a curve result stored (a fit, a plate
// curve, a refit), a review event, a plate's QC verdict changing (and
// not when it is set to the same value, or another column changes). A
// curve without an assay or compound marks nothing.
func TestPotencyStaleMarks(t *testing.T) {
	for name, open := range map[string]func(*testing.T) rawDB{"sqlite": migratedSQLite, "postgres": migratedPostgres} {
		t.Run(name, func(t *testing.T) {
			raw := open(t)
			const at = "'2026-11-03T09:30:00.000000Z'"
			marks := func(step, want string) {
				t.Helper()
				rows, err := raw.query("SELECT assay_id, compound_id FROM potency_stale ORDER BY assay_id, compound_id")
				if err != nil {
					t.Fatal(err)
				}
				if got := fmt.Sprint(rows); got != want {
					t.Errorf("%s: marks %s, want %s", step, got, want)
				}
				if err := raw.exec("DELETE FROM potency_stale"); err != nil {
					t.Fatal(err)
				}
			}
			curve := func(id, kind, plate, key, assay, compound string) string {
				return "INSERT INTO curve_results (id, kind, plate_id, curve_key, assay_id, compound_id, measured_at, created_at, submitted_by, model, status, " +
					"engine_version, input_sha256, settings, input, result) VALUES ('" + id + "', '" + kind + "', " + plate + ", '" + key + "', " + assay + ", " +
					compound + ", " + at + ", " + at + ", 'x', 'hill', 'converged', '0', '0', '{}', '{}', '{}')"
			}
			for _, q := range []string{
				"INSERT INTO assays (id, name, target, readout, units, created_at, created_by) VALUES ('a', 'a', '', '', '', " + at + ", 'x')",
				"INSERT INTO plates (id, created_at, submitted_by, assay_id, barcode, format, measured_at, conc_unit, mode, settings, " +
					"input_sha256, job_id, status, curves_total, curves_done, error) VALUES ('p', " + at + ", 'x', 'a', 'B-1', 384, " + at +
					", 'M', 'agonist', '{}', 'sha', 7, 'done', 1, 1, '')",
				curve("r1", "plate_curve", "'p'", "c1", "'a'", "'c1'"),
				curve("r2", "fit", "NULL", "", "'a'", "'c2'"),
				curve("r3", "fit", "NULL", "", "NULL", "'c3'"),
				curve("r4", "fit", "NULL", "", "'a'", "NULL"),
			} {
				if err := raw.exec(q); err != nil {
					t.Fatalf("%s: %v", q, err)
				}
			}
			marks("curves stored", "[[a c1] [a c2]]")
			for _, c := range []struct{ q, want string }{
				{"UPDATE plates SET qc_pass = false WHERE id = 'p'", "[[a c1]]"},
				{"UPDATE plates SET qc_pass = false WHERE id = 'p'", "[]"},
				{"UPDATE plates SET barcode = 'B-2' WHERE id = 'p'", "[]"},
				{"UPDATE plates SET qc_pass = true WHERE id = 'p'", "[[a c1]]"},
				{"INSERT INTO curve_reviews (id, curve_id, decision, reason, actor, at) VALUES ('v1', 'r2', 'rejected', 'why', 'x', " + at + ")", "[[a c2]]"},
				{"INSERT INTO curve_reviews (id, curve_id, decision, reason, actor, at) VALUES ('v2', 'r3', 'rejected', 'why', 'x', " + at + ")", "[]"},
				{curve("r5", "fit", "NULL", "", "'a'", "'c2'"), "[[a c2]]"},
			} {
				if err := raw.exec(c.q); err != nil {
					t.Fatalf("%s: %v", c.q, err)
				}
				marks(c.q, c.want)
			}
		})
	}
}
