package main

import (
	"bytes"
	"flag"
	"fmt"
	"io"
	"strings"
	"testing"
	"time"

	"sluice/api/service"
	"sluice/fit/cost"
)

func env(m map[string]string) func(string) string { return func(k string) string { return m[k] } }

func TestServeConfig(t *testing.T) {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	c, err := loadServeConfig([]string{"--addr", "127.0.0.1:9999"}, env(map[string]string{
		"SLUICE_ADDR": "0.0.0.0:1", "SLUICE_BODY_LIMIT": "2048", "SLUICE_DATABASE_URL": "postgres://u:secretpw@db:5432/sluice",
		"SLUICE_ADMIN_TOKEN": "a-long-enough-admin-token"}), fs)
	if err != nil {
		t.Fatal(err)
	}
	if c.Addr != "127.0.0.1:9999" || c.BodyLimit != 2048 || c.AuthDisabled || c.ShutdownGrace != 30*time.Second || c.SecureCookies {
		t.Errorf("flags over environment: %+v", c)
	}
	attrs := fmtAttrs(c.logAttrs())
	if strings.Contains(attrs, "secretpw") || strings.Contains(attrs, "a-long-enough-admin-token") || !strings.Contains(attrs, "set (hidden)") {
		t.Errorf("start-up log shows a secret: %s", attrs)
	}
}

func fmtAttrs(a []any) string { return fmt.Sprint(a...) }

func TestServeConfigErrorsNameTheField(t *testing.T) {
	cases := []struct {
		args []string
		env  map[string]string
		want string
	}{
		{[]string{"--addr", "nonsense"}, nil, "--addr / SLUICE_ADDR"},
		{[]string{"--addr", "0.0.0.0:8080", "--auth=false"}, nil, "only on a loopback address"},
		{nil, map[string]string{"SLUICE_AUTH": "off", "SLUICE_ADDR": "10.1.2.3:80"}, "loopback"},
		{nil, map[string]string{"SLUICE_BODY_LIMIT": "lots"}, "SLUICE_BODY_LIMIT"},
		{[]string{"--body-limit", "10"}, nil, "--body-limit"},
		{nil, map[string]string{"SLUICE_DATABASE_URL": "mysql://x"}, "SLUICE_DATABASE_URL"},
		{[]string{"--log-level", "chatty"}, nil, "--log-level"},
		{nil, map[string]string{"SLUICE_ADMIN_TOKEN": "short"}, "SLUICE_ADMIN_TOKEN"},
		{nil, map[string]string{"SLUICE_AUTH": "maybe"}, "SLUICE_AUTH"},
		{[]string{"--shutdown-grace", "-1s"}, nil, "--shutdown-grace / SLUICE_SHUTDOWN_GRACE"},
		{[]string{"--shutdown-grace", "2h"}, nil, "--shutdown-grace / SLUICE_SHUTDOWN_GRACE"},
		{nil, map[string]string{"SLUICE_SHUTDOWN_GRACE": "soon"}, "SLUICE_SHUTDOWN_GRACE"},
		{nil, map[string]string{"SLUICE_JOB_TIMEOUT": "later"}, "SLUICE_JOB_TIMEOUT"},
		{nil, map[string]string{"SLUICE_JOB_RESCUE_AFTER": "later"}, "SLUICE_JOB_RESCUE_AFTER"},
		{[]string{"--job-rescue-after", "100ms"}, nil, "--job-rescue-after / SLUICE_JOB_RESCUE_AFTER"},
		{[]string{"--job-rescue-after", "25h"}, nil, "--job-rescue-after / SLUICE_JOB_RESCUE_AFTER"},
		{[]string{"--job-timeout", "20s"}, nil, "--job-timeout / SLUICE_JOB_TIMEOUT"}, // below db.MinJobTimeout
		{[]string{"--job-timeout", "100ms"}, nil, "--job-timeout / SLUICE_JOB_TIMEOUT"},
		{nil, map[string]string{"SLUICE_SECURE_COOKIES": "sometimes"}, "SLUICE_SECURE_COOKIES"},
	}
	for _, c := range cases {
		fs := flag.NewFlagSet("serve", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		_, err := loadServeConfig(c.args, env(c.env), fs)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%v %v: error %v, want one naming %q", c.args, c.env, err, c.want)
		}
	}
	// Loopback without auth is allowed.
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	if _, err := loadServeConfig([]string{"--auth=false"}, env(nil), fs); err != nil {
		t.Errorf("loopback without auth: %v", err)
	}
	// As the README writes it, and the other spellings.
	for _, args := range [][]string{{"--auth", "off"}, {"--auth=off"}, {"--auth", "false"}, {"-auth", "0"}} {
		c, err := loadServeConfig(args, env(nil), flag.NewFlagSet("serve", flag.ContinueOnError))
		if err != nil || !c.AuthDisabled {
			t.Errorf("%q: %v, auth disabled %v", args, err, c != nil && c.AuthDisabled)
		}
	}
	quiet := flag.NewFlagSet("serve", flag.ContinueOnError)
	quiet.SetOutput(io.Discard)
	if _, err := loadServeConfig([]string{"--auth", "maybe"}, env(nil), quiet); err == nil {
		t.Error("--auth maybe accepted")
	}
}

// token create prints a token once and stores only its hash; migrate and
// demo work on the embedded store.
func TestTokenMigrateDemo(t *testing.T) {
	dir := t.TempDir()
	var out, errb bytes.Buffer
	getenv := env(map[string]string{"SLUICE_DATA": dir})
	if code := runMigrate(nil, getenv, &out, &errb); code != 0 {
		t.Fatalf("migrate: %d %s", code, errb.String())
	}
	out.Reset()
	if code := runToken([]string{"create", "--scope", "submit", "--name", "pipeline-3"}, getenv, &out, &errb); code != 0 {
		t.Fatalf("token: %d %s", code, errb.String())
	}
	secret := strings.TrimSpace(out.String())
	if !strings.HasPrefix(secret, "slc_") || len(secret) < 40 {
		t.Errorf("token %q", secret)
	}
	if code := runToken([]string{"create", "--scope", "submit", "--name", "pipeline-3"}, getenv, &out, &errb); code != 2 {
		t.Errorf("duplicate name: exit %d", code)
	}
	if code := runToken([]string{"create", "--scope", "root", "--name", "x"}, getenv, &out, &errb); code != 2 {
		t.Errorf("bad scope: exit %d", code)
	}
	out.Reset()
	if code := runDemo(nil, getenv, &out, &errb); code != 0 || !strings.Contains(out.String(), "invented") {
		t.Fatalf("demo: %d %s %s", code, out.String(), errb.String())
	}
	out.Reset()
	if code := runDemo(nil, getenv, &out, &errb); code != 0 || !strings.Contains(out.String(), "already") {
		t.Errorf("second demo: %d %s", code, out.String())
	}
}

// The work budgets are CPU times converted to cost units; the defaults are
// the service's, and a sync budget above the limit names both settings.
func TestServeConfigBudgets(t *testing.T) {
	load := func(args []string, e map[string]string) (*serveConfig, error) {
		fs := flag.NewFlagSet("serve", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		return loadServeConfig(args, env(e), fs)
	}
	c, err := load(nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if b := c.budget(); b.Sync != service.DefaultSyncBudget || b.Hard != service.DefaultHardLimit {
		t.Errorf("default budget %+v, want the service's", b)
	}
	c, err = load([]string{"--sync-budget", "2s"}, map[string]string{"SLUICE_WORK_LIMIT": "1m"})
	if err != nil {
		t.Fatal(err)
	}
	// 2 s at cost.NanosecondsPerUnit = 40 is 5e7 units.
	if b := c.budget(); b.Sync != 2e9/cost.NanosecondsPerUnit || b.Hard != 60e9/cost.NanosecondsPerUnit {
		t.Errorf("budget %+v", b)
	}
	if _, err := load([]string{"--sync-budget", "2m"}, nil); err == nil || !strings.Contains(err.Error(), "--sync-budget") {
		t.Errorf("sync budget above the limit: %v", err)
	}
}
