package db_test

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"
	"time"

	"sluice/db"
	"sluice/db/dbtest"
)

// rawAt migrates a fresh store on the engine up to version `to` (0: the
// latest) and returns a plain connection with what Open needs to reach it.
func rawAt(t *testing.T, engine string, to int64) (raw rawDB, url, dir string) {
	ctx := context.Background()
	if engine == "postgres" {
		url = dbtest.PostgresURL(t)
	} else {
		dir = t.TempDir()
	}
	if err := db.Migrate(ctx, url, dir, to); err != nil {
		t.Fatal(err)
	}
	if engine == "postgres" {
		return pgRaw(t, url), url, dir
	}
	return sqliteRaw(t, dir), url, dir
}

// The plate curve of the v3 store: bootstrapped bottom, fixed top, no
// SE for top, at-bound hill.
const v3CurveResult = `{"curve":"demo-ag-1","model":"hill","status":"converged","params":{` +
	`"bottom":{"estimate":1.5,"se":0.25,"wald_ci":[1,2],"boot_ci":[0.75,2.25],"fixed":false,"at_bound":false},` +
	`"top":{"estimate":98.25,"se":null,"wald_ci":[null,null],"boot_ci":[null,null],"fixed":true,"at_bound":false},` +
	`"log_ec50":{"estimate":-6.5,"se":0.125,"wald_ci":[-6.75,-6.25],"boot_ci":[-6.875,-6.125],"fixed":false,"at_bound":false},` +
	`"hill":{"estimate":4,"se":0.5,"wald_ci":[3,5],"boot_ci":[3.5,4.5],"fixed":false,"at_bound":true}},"engine_version":"0.2.0"}`

// A store populated at migration 3 (fit runs with parameters, plates with
// QC and curves, Schild runs) keeps every row through the migration to
// the single results table, readable through the Store.
func TestMigrationKeepsEveryRow(t *testing.T) {
	for _, engine := range []string{"sqlite", "postgres"} {
		t.Run(engine, func(t *testing.T) {
			raw, url, dir := rawAt(t, engine, 3)
			const ts = "'2026-11-03T09:30:00.000000Z'"
			stmts := []string{
				"INSERT INTO assays (id, name, created_at) VALUES ('a1', 'LGX-7 dye', " + ts + ")",
				"INSERT INTO compounds (id, name, created_at) VALUES ('demo-ag-1', 'demo-ag-1', " + ts + ")",
			}
			for i := 0; i < 5; i++ {
				created := fmt.Sprintf("'2026-11-0%dT09:30:00.000000Z'", i+1)
				refit := "NULL"
				if i == 4 {
					refit = "'run-0'"
				}
				logec := "-6.5"
				if i == 3 {
					logec = "NULL" // not converged
				}
				stmts = append(stmts,
					fmt.Sprintf("INSERT INTO fit_runs (id, created_at, submitted_by, assay_id, compound_id, refit_of, model, status, log_ec50, "+
						"engine_version, input_sha256, settings, input, result, labels) VALUES ('run-%d', %s, 'pipeline-3', 'a1', 'demo-ag-1', %s, "+
						"'hill', 'converged', %s, '0.1.0', 'sha%d', '{\"model\":\"hill\"}', '{\"points\":[]}', '{\"status\":\"converged\",\"n\":%d}', '{\"batch\":\"b%d\"}')",
						i, created, refit, logec, i, i, i),
					fmt.Sprintf("INSERT INTO fit_params (run_id, ord, name, estimate, se, wald_lo, wald_hi, boot_lo, boot_hi, fixed, at_bound) VALUES "+
						"('run-%d', 0, 'bottom', 1, 0.5, 0, 2, NULL, NULL, false, false), "+
						"('run-%d', 1, 'top', 100, NULL, NULL, NULL, NULL, NULL, true, false), "+
						"('run-%d', 2, 'log_ec50', -6.5, 0.25, -7, -6, -7.25, -5.75, false, false), "+
						"('run-%d', 3, 'hill', 10, NULL, NULL, NULL, NULL, NULL, false, true)", i, i, i, i))
			}
			stmts = append(stmts,
				"INSERT INTO plates (id, created_at, submitted_by, assay_id, barcode, format, measured_at, conc_unit, mode, settings, "+
					"input_sha256, job_id, status, qc, curves_total, curves_done, error) VALUES ('p1', '2026-11-10T08:00:00.000000Z', 'robot', 'a1', "+
					"'LK-1', 384, '2026-11-02T12:00:00.000000Z', 'M', 'agonist', '{\"fit\":{\"model\":\"hill\"}}', 'plate-sha', 7, 'done', "+
					"'{\"z_prime\":0.75,\"signal_window\":12.5,\"signal_background\":8.5,\"cv\":{\"max_control\":0.0625,\"min_control\":0.125},"+
					"\"edge_shift\":0,\"worst_row_shift\":0,\"worst_column_shift\":0,\"pass\":true,\"reasons\":null}', 2, 2, '')",
				"INSERT INTO plates (id, created_at, submitted_by, assay_id, barcode, format, measured_at, conc_unit, mode, settings, "+
					"input_sha256, job_id, status, qc, curves_total, curves_done, error) VALUES ('p2', '2026-11-11T08:00:00.000000Z', 'robot', 'a1', "+
					"'LK-2', 384, NULL, 'M', 'agonist', '{}', 'plate-sha-2', 8, 'failed', NULL, 0, 0, 'too few controls')",
				"INSERT INTO wells (plate_id, well, row_index, col_index, role, compound_id, conc, value) VALUES ('p1', 'A01', 0, 0, 'sample', 'demo-ag-1', 1e-6, 50)",
				"INSERT INTO plate_curves (plate_id, key, compound_id, antagonist_id, antagonist_conc, status, log_ec50, result) VALUES "+
					"('p1', 'demo-ag-1', 'demo-ag-1', '', 0, 'converged', -6.5, '"+v3CurveResult+"'), "+
					"('p1', 'demo-ag-1+ANT@1e-06', 'demo-ag-1', 'ANT', 1e-6, 'no_convergence', NULL, '{\"status\":\"no_convergence\",\"params\":{}}')",
				"INSERT INTO schild_runs (id, created_at, submitted_by, plate_id, agonist_id, antagonist_id, engine_version, input_sha256, input, result) VALUES "+
					"('p1:demo-ag-1:ANT', "+ts+", 'robot', 'p1', 'demo-ag-1', 'ANT', '0.2.0', 'plate-sha', '{}', '{\"pa2\":8.5}'), "+
					"('s-1', "+ts+", 'pipeline-3', NULL, 'demo-ag-1', 'ANT', '0.2.0', 'x', '{}', '{\"pa2\":8.25}')",
			)
			for _, q := range stmts {
				if err := raw.exec(q); err != nil {
					t.Fatalf("%s: %v", q, err)
				}
			}
			ctx := context.Background()
			s, err := db.Open(ctx, url, dir)
			if err != nil {
				t.Fatal(err)
			}
			defer s.Close()

			// Every fit, with its parameters, labels and refit link.
			runs, _, err := s.FitRuns(ctx, db.FitFilter{})
			if err != nil || len(runs) != 5 {
				t.Fatalf("FitRuns: %d runs, %v", len(runs), err)
			}
			for i := 0; i < 5; i++ {
				r, err := s.FitRun(ctx, fmt.Sprintf("run-%d", i))
				if err != nil {
					t.Fatal(err)
				}
				created := time.Date(2026, 11, 1+i, 9, 30, 0, 0, time.UTC)
				if !r.CreatedAt.Equal(created) || !r.MeasuredAt.Equal(created) || r.AssayID != "a1" || r.CompoundID != "demo-ag-1" ||
					r.InputSHA256 != fmt.Sprintf("sha%d", i) || r.Model != "hill" || r.SubmittedBy != "pipeline-3" {
					t.Errorf("run-%d = %+v", i, r)
				}
				if (i == 3) != (r.LogEC50 == nil) || (r.LogEC50 != nil && *r.LogEC50 != -6.5) {
					t.Errorf("run-%d log_ec50 = %v", i, r.LogEC50)
				}
				if (i == 4) != (r.RefitOf == "run-0") {
					t.Errorf("run-%d refit_of = %q", i, r.RefitOf)
				}
				if !jsonEqual(r.Result, fmt.Sprintf(`{"status":"converged","n":%d}`, i)) || !jsonEqual(r.Labels, fmt.Sprintf(`{"batch":"b%d"}`, i)) ||
					!jsonEqual(r.Settings, `{"model":"hill"}`) || !jsonEqual(r.Input, `{"points":[]}`) {
					t.Errorf("run-%d documents: %s %s %s %s", i, r.Result, r.Labels, r.Settings, r.Input)
				}
				want := []db.FitParam{
					{Name: "bottom", Estimate: f(1), SE: f(0.5), WaldLo: f(0), WaldHi: f(2)},
					{Name: "top", Estimate: f(100), Fixed: true},
					{Name: "log_ec50", Estimate: f(-6.5), SE: f(0.25), WaldLo: f(-7), WaldHi: f(-6), BootLo: f(-7.25), BootHi: f(-5.75)},
					{Name: "hill", Estimate: f(10), AtBound: true},
				}
				if !paramsEqual(r.Params, want) {
					t.Errorf("run-%d params = %s", i, showParams(r.Params))
				}
			}
			c, err := s.CurveResult(ctx, "run-1")
			if err != nil || *c.Hill.Value != 10 || c.Hill.Lo != nil || *c.Bottom.Lo != 0 || *c.LogEC50.Lo != -7.25 || *c.LogEC50.Hi != -5.75 ||
				*c.Top.Value != 100 || c.Kind != db.KindFit {
				t.Errorf("run-1 as a curve result: %+v %v", c, err)
			}

			// Every plate curve, with an ID, its plate's assay and time, and
			// the estimates from its result object.
			cs, err := s.PlateCurves(ctx, "p1")
			if err != nil || len(cs) != 2 {
				t.Fatalf("PlateCurves: %+v %v", cs, err)
			}
			if cs[0].ID != "p1:demo-ag-1" || cs[0].Key != "demo-ag-1" || string(cs[0].Result) != v3CurveResult || *cs[0].LogEC50 != -6.5 ||
				cs[0].Model != "hill" || cs[0].EngineVersion != "0.2.0" {
				t.Errorf("curve 0 = %+v", cs[0])
			}
			if cs[1].ID != "p1:demo-ag-1+ANT@1e-06" || cs[1].AntagonistID != "ANT" || cs[1].AntagonistConc != 1e-6 || cs[1].LogEC50 != nil ||
				cs[1].Status != "no_convergence" || len(cs[1].Params) != 0 {
				t.Errorf("curve 1 = %+v", cs[1])
			}
			wantCurve := []db.FitParam{
				{Name: "bottom", Estimate: f(1.5), SE: f(0.25), WaldLo: f(1), WaldHi: f(2), BootLo: f(0.75), BootHi: f(2.25)},
				{Name: "top", Estimate: f(98.25), Fixed: true},
				{Name: "log_ec50", Estimate: f(-6.5), SE: f(0.125), WaldLo: f(-6.75), WaldHi: f(-6.25), BootLo: f(-6.875), BootHi: f(-6.125)},
				{Name: "hill", Estimate: f(4), SE: f(0.5), WaldLo: f(3), WaldHi: f(5), BootLo: f(3.5), BootHi: f(4.5), AtBound: true},
			}
			if !paramsEqual(cs[0].Params, wantCurve) {
				t.Errorf("curve 0 params = %s", showParams(cs[0].Params))
			}
			pc, err := s.CurveResult(ctx, "p1:demo-ag-1")
			if err != nil || pc.Kind != db.KindPlateCurve || pc.PlateID != "p1" || pc.AssayID != "a1" || pc.SubmittedBy != "robot" ||
				!pc.MeasuredAt.Equal(time.Date(2026, 11, 2, 12, 0, 0, 0, time.UTC)) || pc.InputSHA256 != "plate-sha" ||
				*pc.Hill.Value != 4 || *pc.Hill.Lo != 3.5 || *pc.Hill.Hi != 4.5 || *pc.Bottom.Lo != 0.75 || pc.Top.Lo != nil ||
				*pc.LogEC50.Lo != -6.875 || pc.Input != nil {
				t.Errorf("plate curve as a curve result: %+v %v", pc, err)
			}

			// Potency history: fits and plate curves in one query, by
			// experiment time (the plate was measured on 2 November).
			hist, err := s.CompoundCurves(ctx, db.CurveFilter{CompoundID: "demo-ag-1", AssayID: "a1"})
			var ids []string
			for _, h := range hist {
				ids = append(ids, h.ID)
			}
			if err != nil || fmt.Sprint(ids) != "[run-0 run-1 p1:demo-ag-1 p1:demo-ag-1+ANT@1e-06 run-2 run-3 run-4]" {
				t.Errorf("CompoundCurves = %v %v", ids, err)
			}

			// The plates, their QC as columns, the Schild runs.
			p, err := s.Plate(ctx, "p1")
			if err != nil || p.Figures == nil || p.Figures.ZPrime != 0.75 || p.Figures.SignalWindow != 12.5 ||
				p.Figures.SignalToBackground != 8.5 || p.Figures.MaxCV != 0.0625 || p.Figures.MinCV != 0.125 ||
				!math.IsNaN(p.Figures.MaxMean) || !p.Figures.Pass || len(p.Figures.Reasons) != 0 || p.JobID != 7 {
				t.Errorf("plate p1: %+v %+v %v", p, p.Figures, err)
			}
			if p2, err := s.Plate(ctx, "p2"); err != nil || p2.Figures != nil || p2.Error != "too few controls" {
				t.Errorf("plate p2: %+v %v", p2, err)
			}
			if ws, err := s.Wells(ctx, "p1"); err != nil || len(ws) != 1 {
				t.Errorf("wells: %+v %v", ws, err)
			}
			series, err := s.PlateQCSeries(ctx, "a1", "z_prime", time.Time{}, time.Time{})
			if err != nil || len(series) != 1 || series[0].Value != 0.75 || series[0].PlateID != "p1" {
				t.Errorf("QC series: %+v %v", series, err)
			}
			if r, err := s.SchildRun(ctx, "s-1"); err != nil || !jsonEqual(r.Result, `{"pa2":8.25}`) {
				t.Errorf("schild s-1: %+v %v", r, err)
			}
			if rs, err := s.PlateSchildRuns(ctx, "p1"); err != nil || len(rs) != 1 {
				t.Errorf("plate schild runs: %+v %v", rs, err)
			}
		})
	}
}

func paramsEqual(a, b []db.FitParam) bool {
	return slices.EqualFunc(a, b, func(x, y db.FitParam) bool {
		eq := func(p, q *float64) bool { return p == nil && q == nil || p != nil && q != nil && *p == *q }
		return x.Name == y.Name && eq(x.Estimate, y.Estimate) && eq(x.SE, y.SE) && eq(x.WaldLo, y.WaldLo) && eq(x.WaldHi, y.WaldHi) &&
			eq(x.BootLo, y.BootLo) && eq(x.BootHi, y.BootHi) && x.Fixed == y.Fixed && x.AtBound == y.AtBound
	})
}

func showParams(ps []db.FitParam) string {
	s := ""
	for _, p := range ps {
		s += fmt.Sprintf("{%s", p.Name)
		for _, v := range []*float64{p.Estimate, p.SE, p.WaldLo, p.WaldHi, p.BootLo, p.BootHi} {
			if v == nil {
				s += " nil"
			} else {
				s += fmt.Sprintf(" %g", *v)
			}
		}
		s += fmt.Sprintf(" %v %v} ", p.Fixed, p.AtBound)
	}
	return s
}

// Replicas that start together migrate one after the other under the
// advisory lock: every one succeeds on a fresh database (unlocked, two
// would both try to create the first tables).
func TestConcurrentMigrationsPostgres(t *testing.T) {
	url := dbtest.PostgresURL(t)
	ctx := context.Background()
	errs := make(chan error, 3)
	for i := 0; i < 3; i++ {
		go func() { errs <- db.Migrate(ctx, url, "", 0) }()
	}
	for i := 0; i < 3; i++ {
		if err := <-errs; err != nil {
			t.Errorf("replica %d: %v", i, err)
		}
	}
	s, err := db.OpenWith(ctx, url, "", db.Options{SkipMigrations: true})
	if err != nil {
		t.Fatalf("open without migrating after the replicas: %v", err)
	}
	s.Close()
}

// Opening without migrating refuses a store that is behind, and says
// what to run.
func TestSkipMigrationsChecks(t *testing.T) {
	for _, engine := range []string{"sqlite", "postgres"} {
		t.Run(engine, func(t *testing.T) {
			_, url, dir := rawAt(t, engine, 3)
			_, err := db.OpenWith(context.Background(), url, dir, db.Options{SkipMigrations: true})
			if err == nil || !strings.Contains(err.Error(), "at migration 3") || !strings.Contains(err.Error(), "sluice migrate") {
				t.Errorf("store at migration 3 opened without migrating: %v", err)
			}
		})
	}
}
