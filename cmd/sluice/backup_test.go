package main

import (
	"bytes"
	"context"
	"crypto/rand"
	"encoding/gob"
	"encoding/hex"
	"encoding/json"
	"io"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/jackc/pgx/v5"

	"sluice/db"
	"sluice/db/dbtest"
)

// The backup and restore of deploy/README.md, done once: a plate stored
// and fitted by `sluice serve` in a fresh database, dumped with
// `pg_dump -Fc`, restored with `pg_restore` into another new database,
// reads back byte for byte through the Store: the plate, its wells, its
// curves with their bootstrap draws, its job and the audit log. The
// restored database needs no migration (the migration history came
// along). It runs when SLUICE_TEST_DATABASE_URL names a PostgreSQL and
// pg_dump and pg_restore are on PATH; under CI a missing tool fails.
func TestBackupRestore(t *testing.T) {
	base := os.Getenv(dbtest.URLVar)
	if base == "" {
		if os.Getenv("CI") == "true" {
			t.Fatalf("%s is not set; CI needs PostgreSQL", dbtest.URLVar)
		}
		t.Skipf("%s is not set", dbtest.URLVar)
	}
	tools := map[string]string{}
	for _, name := range []string{"pg_dump", "pg_restore"} {
		p, err := exec.LookPath(name)
		if err != nil {
			if os.Getenv("CI") == "true" {
				t.Fatalf("%s is not on PATH; CI installs it with the PostgreSQL server", name)
			}
			t.Skipf("%s is not on PATH (it comes with PostgreSQL's client programs)", name)
		}
		tools[name] = p
	}
	srcURL := freshDatabase(t, base)
	dstURL := freshDatabase(t, base)

	// A plate through the service, fitted by its worker.
	web, cancel, done, logs := startServe(t, srcURL, "", "all", time.Minute)
	resp, err := http.Post(web+"/v1/plates?conc_unit=M&format=96&barcode=LK-BACKUP&resamples=200&seed=7&wait=60s", "text/csv",
		strings.NewReader(invented96CSV()))
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	var view struct {
		ID     string `json:"plate_id"`
		Status string `json:"status"`
	}
	if err := json.Unmarshal(body, &view); err != nil || resp.StatusCode != http.StatusOK || view.Status != db.PlateDone {
		t.Fatalf("POST /v1/plates?wait: %d %s (%v)\n%s", resp.StatusCode, body, err, logs)
	}
	cancel()
	if code := <-done; code != 0 {
		t.Fatalf("serve exit %d\n%s", code, logs)
	}

	// deploy/README.md's commands: dump in the custom format, restore
	// into an empty database, owners left to whoever restores.
	dump := filepath.Join(t.TempDir(), "sluice.dump")
	for _, cmd := range [][]string{
		{tools["pg_dump"], "--format=custom", "--file=" + dump, "--dbname=" + srcURL},
		{tools["pg_restore"], "--exit-on-error", "--no-owner", "--dbname=" + dstURL, dump},
	} {
		if out, err := exec.Command(cmd[0], cmd[1:]...).CombinedOutput(); err != nil {
			t.Fatalf("%s: %v\n%s", filepath.Base(cmd[0]), err, out)
		}
	}

	before := plateSnapshot(t, srcURL, view.ID)
	after := plateSnapshot(t, dstURL, view.ID)
	if len(before.Curves) != 8 || len(before.Results) != 8 || len(before.Wells) != 96 || len(before.Results[0].BootDraws) == 0 {
		t.Fatalf("the plate to back up is not what the test needs: %d wells, %d curves, %d draws",
			len(before.Wells), len(before.Curves), len(before.Results[0].BootDraws))
	}
	parts := []struct {
		name          string
		before, after any
	}{
		{"plate", before.Plate, after.Plate},
		{"wells", before.Wells, after.Wells},
		{"curves", before.Curves, after.Curves},
		{"curve results", before.Results, after.Results},
		{"job", before.Job, after.Job},
		{"audit log", before.Audit, after.Audit},
	}
	for _, p := range parts {
		if b, a := encodeGob(t, p.before), encodeGob(t, p.after); !bytes.Equal(b, a) {
			t.Errorf("the restored %s differ from the dumped (%d and %d bytes encoded)", p.name, len(b), len(a))
		}
	}
}

// snapshot is everything the store gives back about one plate.
type snapshot struct {
	Plate   *db.Plate
	Wells   []db.WellRow
	Curves  []db.PlateCurve
	Results []db.CurveResult
	Job     *db.Job
	Audit   []db.AuditEntry
}

// plateSnapshot reads a plate back through a store opened without
// migrating (it fails if the database is not at the binary's migration).
func plateSnapshot(t *testing.T, dbURL, plateID string) snapshot {
	t.Helper()
	ctx := context.Background()
	store, err := db.OpenWith(ctx, dbURL, "", db.Options{SkipMigrations: true})
	if err != nil {
		t.Fatalf("open %s: %v", redactURL(dbURL), err)
	}
	defer store.Close()
	var s snapshot
	if s.Plate, err = store.Plate(ctx, plateID); err != nil {
		t.Fatal(err)
	}
	if s.Wells, err = store.Wells(ctx, plateID); err != nil {
		t.Fatal(err)
	}
	if s.Curves, err = store.PlateCurves(ctx, plateID); err != nil {
		t.Fatal(err)
	}
	for _, c := range s.Curves {
		r, err := store.CurveResult(ctx, c.ID)
		if err != nil {
			t.Fatal(err)
		}
		s.Results = append(s.Results, *r)
	}
	if s.Job, err = store.Job(ctx, s.Plate.JobID); err != nil {
		t.Fatal(err)
	}
	if s.Audit, err = store.Audit(ctx, 100); err != nil {
		t.Fatal(err)
	}
	return s
}

// encodeGob encodes v with gob, which keeps every float64's bits (NaN
// included) and every byte slice as it is.
func encodeGob(t *testing.T, v any) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := gob.NewEncoder(&b).Encode(v); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// freshDatabase creates an empty database beside the one base names,
// dropped when the test ends, and returns its URL.
func freshDatabase(t *testing.T, base string) string {
	t.Helper()
	ctx := context.Background()
	admin, err := pgx.Connect(ctx, base)
	if err != nil {
		t.Fatalf("PostgreSQL at %s: %v", dbtest.URLVar, err)
	}
	defer admin.Close(ctx)
	var b [6]byte
	rand.Read(b[:])
	name := "sluice_backup_" + hex.EncodeToString(b[:])
	if _, err := admin.Exec(ctx, "CREATE DATABASE "+name); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() {
		c, err := pgx.Connect(context.Background(), base)
		if err != nil {
			t.Errorf("drop database %s: %v", name, err)
			return
		}
		defer c.Close(context.Background())
		if _, err := c.Exec(context.Background(), "DROP DATABASE "+name+" WITH (FORCE)"); err != nil {
			t.Errorf("drop database %s: %v", name, err)
		}
	})
	u, err := url.Parse(base)
	if err != nil {
		t.Fatal(err)
	}
	u.Path = "/" + name
	return u.String()
}
