package main

import (
	"flag"
	"io"
	"os"
	"regexp"
	"strings"
	"testing"

	"github.com/goccy/go-yaml"
)

// No Docker engine runs where the tests do, so check what can be checked:
// docker-compose.yml and the Prometheus files parse, name the right
// variables, ports and targets, and the service's environment is a
// configuration `sluice serve` accepts.
func TestDockerCompose(t *testing.T) {
	var compose struct {
		Services map[string]struct {
			Image       string            `yaml:"image"`
			Build       map[string]string `yaml:"build"`
			Environment map[string]string `yaml:"environment"`
			Ports       []string          `yaml:"ports"`
			Volumes     []string          `yaml:"volumes"`
		} `yaml:"services"`
	}
	raw, err := os.ReadFile("../../docker-compose.yml")
	if err != nil {
		t.Fatal(err)
	}
	if err := yaml.Unmarshal(raw, &compose); err != nil {
		t.Fatalf("docker-compose.yml: %v", err)
	}
	pg, ok := compose.Services["postgres"]
	if !ok || !strings.HasPrefix(pg.Image, "postgres:") || pg.Environment["POSTGRES_DB"] != "sluice" {
		t.Errorf("postgres service: %+v", pg)
	}
	sl := compose.Services["sluice"]
	if sl.Build["dockerfile"] != "deploy/Dockerfile" || !contains(sl.Ports, "8080:8080") {
		t.Errorf("sluice service: %+v", sl)
	}
	df, err := os.ReadFile("../../deploy/Dockerfile")
	if err != nil || !strings.Contains(string(df), "./cmd/sluice") || !strings.Contains(string(df), "CGO_ENABLED=0") {
		t.Errorf("deploy/Dockerfile does not build ./cmd/sluice statically: %v", err)
	}
	// Substitute ${VAR:-default} and ${VAR:?msg} as compose would with
	// SLUICE_ADMIN_TOKEN set, then load the configuration.
	subst := regexp.MustCompile(`\$\{([A-Z_]+)(:-([^}]*)|:\?[^}]*)?\}`)
	env := map[string]string{}
	for k, v := range sl.Environment {
		env[k] = subst.ReplaceAllStringFunc(v, func(m string) string {
			p := subst.FindStringSubmatch(m)
			if p[1] == "SLUICE_ADMIN_TOKEN" {
				return "a-secret-admin-token"
			}
			return p[3]
		})
	}
	if !strings.Contains(env["SLUICE_DATABASE_URL"], "@postgres:5432/sluice") {
		t.Errorf("SLUICE_DATABASE_URL %q does not point at the postgres service", env["SLUICE_DATABASE_URL"])
	}
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	cfg, err := loadServeConfig(nil, func(k string) string { return env[k] }, fs)
	if err != nil {
		t.Fatalf("sluice serve rejects the compose environment: %v", err)
	}
	if cfg.AuthDisabled || cfg.Addr != "0.0.0.0:8080" {
		t.Errorf("compose config: %+v", cfg)
	}
	prom := compose.Services["prometheus"]
	if !contains(prom.Ports, "9090:9090") || !contains(prom.Volumes, "./deploy/prometheus/prometheus.yml:/etc/prometheus/prometheus.yml:ro") {
		t.Errorf("prometheus service: %+v", prom)
	}
	var pc struct {
		RuleFiles     []string `yaml:"rule_files"`
		ScrapeConfigs []struct {
			MetricsPath   string `yaml:"metrics_path"`
			StaticConfigs []struct {
				Targets []string `yaml:"targets"`
			} `yaml:"static_configs"`
		} `yaml:"scrape_configs"`
	}
	raw, err = os.ReadFile("../../deploy/prometheus/prometheus.yml")
	if err != nil {
		t.Fatal(err)
	}
	if err := yaml.Unmarshal(raw, &pc); err != nil {
		t.Fatal(err)
	}
	if len(pc.ScrapeConfigs) != 1 || pc.ScrapeConfigs[0].MetricsPath != "/metrics" ||
		!contains(pc.ScrapeConfigs[0].StaticConfigs[0].Targets, "sluice:8080") {
		t.Errorf("prometheus.yml scrape: %+v", pc)
	}
	var rules struct {
		Groups []struct {
			Rules []struct {
				Alert string `yaml:"alert"`
				Expr  string `yaml:"expr"`
			} `yaml:"rules"`
		} `yaml:"groups"`
	}
	raw, _ = os.ReadFile("../../deploy/prometheus/alerts.yml")
	if err := yaml.Unmarshal(raw, &rules); err != nil || len(rules.Groups) == 0 || len(rules.Groups[0].Rules) == 0 {
		t.Fatalf("alerts.yml: %v", err)
	}
	// Every sluice_ metric an alert uses is one the service exports.
	exported := []string{"sluice_http_requests_total", "sluice_http_request_duration_seconds_bucket", "sluice_fits_total",
		"sluice_db_connections_in_use", "sluice_db_connections_max"}
	name := regexp.MustCompile(`sluice_[a-z_]+`)
	for _, r := range rules.Groups[0].Rules {
		for _, m := range name.FindAllString(r.Expr, -1) {
			if !contains(exported, m) {
				t.Errorf("alert %s uses %s, which Sluice does not export", r.Alert, m)
			}
		}
	}
}

func contains(s []string, v string) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}
