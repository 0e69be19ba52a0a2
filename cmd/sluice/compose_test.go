package main

import (
	"flag"
	"io"
	"os"
	"regexp"
	"slices"
	"strings"
	"testing"

	"github.com/goccy/go-yaml"
)

// composeService is the part of a Compose service this file uses; the
// file is decoded strictly, so a field not declared here (a misspelt key
// too) fails the test.
type composeService struct {
	Image       string            `yaml:"image"`
	Build       map[string]string `yaml:"build"`
	Command     []string          `yaml:"command"`
	Environment map[string]string `yaml:"environment"`
	Ports       []string          `yaml:"ports"`
	Volumes     []string          `yaml:"volumes"`
	DependsOn   map[string]struct {
		Condition string `yaml:"condition"`
	} `yaml:"depends_on"`
	Healthcheck map[string]any `yaml:"healthcheck"`
	Restart     string         `yaml:"restart"`
}

// No Docker engine runs where the tests do, so check what can be checked:
// docker-compose.yml and the Prometheus files parse, name the right
// variables, ports and targets, the api and worker services' command and
// environment are a configuration `sluice serve` accepts (every variable
// one it reads), the migrate service's is one `sluice migrate` runs with,
// and the worker publishes no port, so that `--scale worker=N` works.
func TestDockerCompose(t *testing.T) {
	var compose struct {
		// The YAML anchors the services merge.
		SluiceDB map[string]string         `yaml:"x-sluice-db"`
		Sluice   composeService            `yaml:"x-sluice"`
		Services map[string]composeService `yaml:"services"`
		Volumes  map[string]any            `yaml:"volumes"`
	}
	raw, err := os.ReadFile("../../docker-compose.yml")
	if err != nil {
		t.Fatal(err)
	}
	if err := yaml.UnmarshalWithOptions(raw, &compose, yaml.Strict()); err != nil {
		t.Fatalf("docker-compose.yml: %v", err)
	}
	pg, ok := compose.Services["postgres"]
	if !ok || !strings.HasPrefix(pg.Image, "postgres:") || pg.Environment["POSTGRES_DB"] != "sluice" {
		t.Errorf("postgres service: %+v", pg)
	}
	df, err := os.ReadFile("../../deploy/Dockerfile")
	if err != nil || !strings.Contains(string(df), "./cmd/sluice") || !strings.Contains(string(df), "CGO_ENABLED=0") ||
		!strings.Contains(string(df), `ENTRYPOINT ["/usr/local/bin/sluice"]`) {
		t.Errorf("deploy/Dockerfile does not build ./cmd/sluice statically as the entrypoint: %v", err)
	}
	// Substitute ${VAR:-default} and ${VAR:?msg} as compose would with
	// SLUICE_ADMIN_TOKEN set.
	subst := regexp.MustCompile(`\$\{([A-Z_]+)(:-([^}]*)|:\?[^}]*)?\}`)
	envOf := func(s composeService) map[string]string {
		env := map[string]string{}
		for k, v := range s.Environment {
			env[k] = subst.ReplaceAllStringFunc(v, func(m string) string {
				p := subst.FindStringSubmatch(m)
				if p[1] == "SLUICE_ADMIN_TOKEN" {
					return "a-secret-admin-token"
				}
				return p[3]
			})
		}
		return env
	}
	// The three Sluice services run one image, built from deploy/Dockerfile.
	for _, name := range []string{"migrate", "api", "worker"} {
		s := compose.Services[name]
		if s.Build["dockerfile"] != "deploy/Dockerfile" || s.Image != "sluice:local" {
			t.Errorf("%s service: build %v image %q, want deploy/Dockerfile as sluice:local", name, s.Build, s.Image)
		}
		if !strings.Contains(envOf(s)["SLUICE_DATABASE_URL"], "@postgres:5432/sluice") {
			t.Errorf("%s service: SLUICE_DATABASE_URL %q does not point at the postgres service", name, envOf(s)["SLUICE_DATABASE_URL"])
		}
	}

	migrate := compose.Services["migrate"]
	if !slices.Equal(migrate.Command, []string{"migrate"}) || migrate.Restart != "no" ||
		migrate.DependsOn["postgres"].Condition != "service_healthy" || len(migrate.Ports) != 0 {
		t.Errorf("migrate service: %+v", migrate)
	}
	asked := map[string]bool{}
	var stdout, stderr strings.Builder
	migrateArgs := append(slices.Clone(migrate.Command[1:]), "--data", t.TempDir())
	if code := runMigrate(migrateArgs, func(k string) string { asked[k] = true; return "" }, &stdout, &stderr); code != 0 {
		t.Errorf("sluice %v: exit %d: %s", migrate.Command, code, stderr.String())
	}
	for k := range migrate.Environment {
		if !asked[k] {
			t.Errorf("migrate service: sluice migrate does not read %s", k)
		}
	}

	for _, role := range []string{"api", "worker"} {
		s := compose.Services[role]
		if len(s.Command) == 0 || s.Command[0] != "serve" {
			t.Fatalf("%s service: command %q is not sluice serve", role, s.Command)
		}
		if s.DependsOn["migrate"].Condition != "service_completed_successfully" {
			t.Errorf("%s service starts before the migration has succeeded: %+v", role, s.DependsOn)
		}
		env := envOf(s)
		asked := map[string]bool{}
		fs := flag.NewFlagSet("serve", flag.ContinueOnError)
		fs.SetOutput(io.Discard)
		cfg, err := loadServeConfig(s.Command[1:], func(k string) string { asked[k] = true; return env[k] }, fs)
		if err != nil {
			t.Fatalf("sluice serve rejects the %s service's command and environment: %v", role, err)
		}
		for k := range env {
			if !asked[k] && !slices.Contains(goRuntimeEnv, k) {
				t.Errorf("%s service: sluice serve does not read %s", role, k)
			}
		}
		if cfg.Role != role || !cfg.SkipMigrations || cfg.AuthDisabled || cfg.Addr != "0.0.0.0:8080" {
			t.Errorf("%s service config: %+v", role, cfg)
		}
	}
	if api := compose.Services["api"]; !slices.Equal(api.Ports, []string{"8080:8080"}) {
		t.Errorf("api service publishes %v, want 8080:8080", api.Ports)
	}
	// A published port or a fixed name would stop a second worker.
	if w := compose.Services["worker"]; len(w.Ports) != 0 {
		t.Errorf("worker service publishes %v; --scale worker=N needs none", w.Ports)
	}
	if _, ok := compose.Services["sluice"]; ok {
		t.Error("a sluice service that is neither api nor worker")
	}
	prom := compose.Services["prometheus"]
	if !contains(prom.Ports, "9090:9090") || !contains(prom.Volumes, "./deploy/prometheus/prometheus.yml:/etc/prometheus/prometheus.yml:ro") {
		t.Errorf("prometheus service: %+v", prom)
	}
	var pc struct {
		Global        map[string]string `yaml:"global"`
		RuleFiles     []string          `yaml:"rule_files"`
		ScrapeConfigs []struct {
			JobName      string `yaml:"job_name"`
			MetricsPath  string `yaml:"metrics_path"`
			DNSSDConfigs []struct {
				Names           []string `yaml:"names"`
				Type            string   `yaml:"type"`
				Port            int      `yaml:"port"`
				RefreshInterval string   `yaml:"refresh_interval"`
			} `yaml:"dns_sd_configs"`
		} `yaml:"scrape_configs"`
	}
	raw, err = os.ReadFile("../../deploy/prometheus/prometheus.yml")
	if err != nil {
		t.Fatal(err)
	}
	if err := yaml.UnmarshalWithOptions(raw, &pc, yaml.Strict()); err != nil {
		t.Fatal(err)
	}
	// Prometheus finds every api and worker container by DNS, on the
	// port they listen on.
	if len(pc.ScrapeConfigs) != 1 || pc.ScrapeConfigs[0].JobName != "sluice" || pc.ScrapeConfigs[0].MetricsPath != "/metrics" ||
		len(pc.ScrapeConfigs[0].DNSSDConfigs) != 1 {
		t.Fatalf("prometheus.yml scrape: %+v", pc)
	}
	sd := pc.ScrapeConfigs[0].DNSSDConfigs[0]
	if !slices.Equal(sd.Names, []string{"api", "worker"}) || sd.Type != "A" || sd.Port != 8080 {
		t.Errorf("prometheus.yml DNS discovery: %+v", sd)
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
		"sluice_db_connections_in_use", "sluice_db_connections_max", "sluice_jobs_discarded", "sluice_jobs_retryable", "sluice_jobs_queued", "sluice_jobs_running",
		"sluice_jobs_oldest_running_seconds", "sluice_server_errors_total", "sluice_http_connections_refused_total",
		"sluice_drift_violations_total", "sluice_assay_out_of_control"}
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
