package main

import (
	"bytes"
	"context"
	"errors"
	"flag"
	"io"
	"strings"
	"testing"

	"sluice/api"
	"sluice/db"
)

// token list shows every token without its secret or hash; token revoke
// makes the token unusable and says so when there is nothing to revoke.
func TestTokenListRevoke(t *testing.T) {
	dir := t.TempDir()
	getenv := env(map[string]string{"SLUICE_DATA": dir})
	var out, errb bytes.Buffer
	secrets := map[string]string{}
	for _, name := range []string{"pipeline-3", "dashboard"} {
		out.Reset()
		if code := runToken([]string{"create", "--scope", "read", "--name", name}, getenv, &out, &errb); code != 0 {
			t.Fatalf("create %s: %d %s", name, code, errb.String())
		}
		secrets[name] = strings.TrimSpace(out.String())
	}
	out.Reset()
	if code := runToken([]string{"list"}, getenv, &out, &errb); code != 0 {
		t.Fatalf("list: %d %s", code, errb.String())
	}
	list := out.String()
	lines := strings.Split(strings.TrimSpace(list), "\n")
	if len(lines) != 3 || !strings.HasPrefix(lines[1], "dashboard ") || !strings.HasPrefix(lines[2], "pipeline-3 ") ||
		!strings.HasSuffix(lines[2], " -") {
		t.Errorf("list:\n%s", list)
	}
	for _, s := range secrets {
		if strings.Contains(list, s) || strings.Contains(list, api.HashToken(s)) {
			t.Errorf("list shows a secret or its hash:\n%s", list)
		}
	}

	out.Reset()
	if code := runToken([]string{"revoke", "pipeline-3"}, getenv, &out, &errb); code != 0 || !strings.Contains(out.String(), "revoked") {
		t.Fatalf("revoke: %d %s %s", code, out.String(), errb.String())
	}
	errb.Reset()
	if code := runToken([]string{"revoke", "pipeline-3"}, getenv, &out, &errb); code != 2 || !strings.Contains(errb.String(), "no unrevoked token") {
		t.Errorf("second revoke: %d %s", code, errb.String())
	}
	if code := runToken([]string{"revoke"}, getenv, &out, &errb); code != 2 {
		t.Errorf("revoke without a name: %d", code)
	}
	out.Reset()
	runToken([]string{"list"}, getenv, &out, &errb)
	lines = strings.Split(strings.TrimSpace(out.String()), "\n")
	if len(lines) != 3 || strings.HasSuffix(lines[2], " -") || !strings.HasSuffix(lines[1], " -") {
		t.Errorf("list after revoking pipeline-3:\n%s", out.String())
	}

	ctx := context.Background()
	store, err := db.Open(ctx, "", dir)
	if err != nil {
		t.Fatal(err)
	}
	defer store.Close()
	if _, err := store.TokenByHash(ctx, api.HashToken(secrets["pipeline-3"])); !errors.Is(err, db.ErrNotFound) {
		t.Errorf("revoked token still valid: %v", err)
	}
	if _, err := store.TokenByHash(ctx, api.HashToken(secrets["dashboard"])); err != nil {
		t.Errorf("other token: %v", err)
	}
	entries, err := store.Audit(ctx, 10)
	if err != nil || len(entries) != 3 || entries[0].Action != "token.revoke" || entries[0].Target != "pipeline-3" {
		t.Errorf("audit: %+v %v", entries, err)
	}
}

// --migrate=false (or SLUICE_MIGRATE=false) is read and validated.
func TestMigrateFlag(t *testing.T) {
	for _, c := range []struct {
		args []string
		env  map[string]string
		want bool
		bad  bool
	}{
		{nil, nil, true, false},
		{[]string{"--migrate=false"}, nil, false, false},
		{nil, map[string]string{"SLUICE_MIGRATE": "false"}, false, false},
		{[]string{"--migrate=true"}, map[string]string{"SLUICE_MIGRATE": "off"}, true, false},
		{nil, map[string]string{"SLUICE_MIGRATE": "maybe"}, true, true},
	} {
		fs := flag.NewFlagSet("serve", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		cfg, err := loadServeConfig(c.args, env(c.env), fs)
		if c.bad {
			if err == nil || !strings.Contains(err.Error(), "SLUICE_MIGRATE") {
				t.Errorf("%v %v: %v, want an error naming SLUICE_MIGRATE", c.args, c.env, err)
			}
			continue
		}
		if err != nil || cfg.SkipMigrations == c.want {
			t.Errorf("%v %v: skip migrations %v, %v; want migrate %v", c.args, c.env, cfg.SkipMigrations, err, c.want)
		}
	}
}

// A store opened without migrating must already be migrated: the
// embedded store of a fresh directory is refused, one that `sluice
// migrate` prepared is opened.
func TestOpenWithoutMigrating(t *testing.T) {
	dir := t.TempDir()
	ctx := context.Background()
	if _, err := db.OpenWith(ctx, "", dir, db.Options{SkipMigrations: true}); err == nil || !strings.Contains(err.Error(), "sluice migrate") {
		t.Fatalf("unmigrated store opened: %v", err)
	}
	var out, errb bytes.Buffer
	if code := runMigrate([]string{"--data", dir}, env(nil), &out, &errb); code != 0 {
		t.Fatalf("migrate: %d %s", code, errb.String())
	}
	s, err := db.OpenWith(ctx, "", dir, db.Options{SkipMigrations: true})
	if err != nil {
		t.Fatal(err)
	}
	s.Close()
}
