package main

import (
	"errors"
	"flag"
	"fmt"
	"log/slog"
	"net"
	"net/url"
	"strconv"
	"strings"
	"time"

	"sluice/api"
	"sluice/api/service"
	"sluice/db"
	"sluice/fit/cost"
)

// serveConfig is the effective configuration of `sluice serve`: defaults,
// then SLUICE_* environment variables, then flags.
type serveConfig struct {
	Addr         string // SLUICE_ADDR, --addr
	DataDir      string // SLUICE_DATA, --data
	DatabaseURL  string // SLUICE_DATABASE_URL
	BodyLimit    int64  // SLUICE_BODY_LIMIT, --body-limit (bytes)
	AdminToken   string // SLUICE_ADMIN_TOKEN
	AuthDisabled bool   // SLUICE_AUTH=off, --auth=false
	Demo         bool   // --demo
	LogLevel     string // SLUICE_LOG_LEVEL, --log-level
	FitWorkers   int    // SLUICE_FIT_WORKERS, --fit-workers
	Role         string // SLUICE_ROLE, --role: api, worker or all
	// SkipMigrations (SLUICE_MIGRATE=false, --migrate=false) lets API
	// replicas skip the store's migrations at start and only check that
	// `sluice migrate` has run. The zero value (the default) migrates.
	SkipMigrations bool
	// SecureCookies (SLUICE_SECURE_COOKIES, --secure-cookies) marks the
	// dashboard's session cookie Secure on plain HTTP: set it behind a
	// proxy that terminates TLS (under TLS the cookie is Secure anyway).
	SecureCookies bool
	// ShutdownGrace (SLUICE_SHUTDOWN_GRACE, --shutdown-grace) is how long a
	// SIGTERM or SIGINT lets running plate jobs and HTTP requests finish
	// before they are cancelled (a cancelled job is retried later, by this
	// or another worker). Zero cancels them at once; range 0–1h; default
	// 30s, inside Kubernetes' default termination grace period.
	ShutdownGrace time.Duration
	// SyncBudget (SLUICE_SYNC_BUDGET, --sync-budget) is the estimated CPU
	// time of one core a fit, Schild, potential or operational request may
	// take before it answers; a request estimated above it (fit.Cost,
	// schild.Cost, membrane.Cost) is queued as a job and answered 202. WorkLimit
	// (SLUICE_WORK_LIMIT, --work-limit) refuses any request estimated above
	// it with a 422. Range 1ms ≤ sync budget ≤ work limit ≤ 1h; defaults
	// 1s and 30s (service.DefaultSyncBudget and DefaultHardLimit).
	SyncBudget, WorkLimit time.Duration
	// JobTimeout (SLUICE_JOB_TIMEOUT, --job-timeout) is the ceiling of a
	// queued job's timeout, which is scaled to its work
	// (service.JobTimeout: 30 s + 10 × its estimated single-core time);
	// range 30s–24h. JobRescueAfter (SLUICE_JOB_RESCUE_AFTER,
	// --job-rescue-after) is how long an attempt may run, and longer than
	// its own timeout, before the job is taken for orphaned (its worker
	// died) and retried by another worker; range 1s–24h. Zero (the
	// default) means the store's defaults, 10m and 1m (db.Options). An
	// orphaned job is released within db.RescueBound of its attempt's
	// start: about 1 min 50 s for a job of up to 3 s of work
	// (deploy/README.md).
	JobTimeout, JobRescueAfter time.Duration
	// IdemRetention (SLUICE_IDEMPOTENCY_RETENTION,
	// --idempotency-retention) is how long a stored reply is kept under
	// its Idempotency-Key before the workers' sweep deletes it; range
	// 1m–2160h (90 days), default 24h. IdemMaxReply
	// (SLUICE_IDEMPOTENCY_MAX_REPLY, --idempotency-max-reply) caps a stored
	// reply's body in bytes: over it only the key, status and Location are
	// kept, and a replay answers 409 saying so; range 1024 – 1 GiB, default
	// 256 KiB.
	IdemRetention time.Duration
	IdemMaxReply  int64
	// DBTimeout (SLUICE_DB_TIMEOUT, --db-timeout) bounds every call to the
	// database (db.Options.CallTimeout): past it the request is answered
	// 503 with Retry-After, so a frozen database never hangs a request.
	// Range 100ms–10m; default 15s (db.DefaultCallTimeout).
	DBTimeout time.Duration
	// MaxConns (SLUICE_MAX_CONNS, --max-conns) caps the HTTP connections
	// served at once; one over the cap is answered 503 and closed
	// (api.LimitListener). Range 16–1 000 000; default 1024
	// (api.DefaultMaxConns).
	MaxConns int
}

// Bounds of --idempotency-retention and --idempotency-max-reply.
const (
	minIdemRetention = time.Minute
	maxIdemRetention = 90 * 24 * time.Hour
	minIdemMaxReply  = 1024
	maxIdemMaxReply  = 1 << 30
)

// Bounds of --max-conns.
const (
	minMaxConns = 16
	maxMaxConns = 1_000_000
)

// Bounds and defaults of --sync-budget and --work-limit.
const (
	minBudget = time.Millisecond
	maxBudget = time.Hour
)

// Bounds and default of --shutdown-grace.
const (
	defaultShutdownGrace = 30 * time.Second
	maxShutdownGrace     = time.Hour
)

// maxBodyLimit bounds --body-limit.
const maxBodyLimit = 1 << 30

// envOr returns the variable's value or def.
func envOr(getenv func(string) string, name, def string) string {
	if v := getenv(name); v != "" {
		return v
	}
	return def
}

// loadServeConfig reads the environment and the flags and validates the
// result; every error names the variable or flag.
func loadServeConfig(args []string, getenv func(string) string, fs *flag.FlagSet) (*serveConfig, error) {
	c := &serveConfig{}
	var errs []error
	limit, err := strconv.ParseInt(envOr(getenv, "SLUICE_BODY_LIMIT", "10485760"), 10, 64)
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_BODY_LIMIT: %q is not a whole number of bytes", getenv("SLUICE_BODY_LIMIT")))
	}
	workers, err := strconv.Atoi(envOr(getenv, "SLUICE_FIT_WORKERS", "0"))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_FIT_WORKERS: %q is not a whole number", getenv("SLUICE_FIT_WORKERS")))
	}
	grace, err := time.ParseDuration(envOr(getenv, "SLUICE_SHUTDOWN_GRACE", defaultShutdownGrace.String()))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_SHUTDOWN_GRACE: %q is not a duration (e.g. 30s)", getenv("SLUICE_SHUTDOWN_GRACE")))
	}
	defSync, defLimit := durationOf(service.DefaultSyncBudget), durationOf(service.DefaultHardLimit)
	syncBudget, err := time.ParseDuration(envOr(getenv, "SLUICE_SYNC_BUDGET", defSync.String()))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_SYNC_BUDGET: %q is not a duration (e.g. 1s)", getenv("SLUICE_SYNC_BUDGET")))
	}
	workLimit, err := time.ParseDuration(envOr(getenv, "SLUICE_WORK_LIMIT", defLimit.String()))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_WORK_LIMIT: %q is not a duration (e.g. 30s)", getenv("SLUICE_WORK_LIMIT")))
	}
	jobTimeout, err := time.ParseDuration(envOr(getenv, "SLUICE_JOB_TIMEOUT", "0s"))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_JOB_TIMEOUT: %q is not a duration (e.g. 10m)", getenv("SLUICE_JOB_TIMEOUT")))
	}
	jobRescue, err := time.ParseDuration(envOr(getenv, "SLUICE_JOB_RESCUE_AFTER", "0s"))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_JOB_RESCUE_AFTER: %q is not a duration (e.g. 1m)", getenv("SLUICE_JOB_RESCUE_AFTER")))
	}
	idemRetention, err := time.ParseDuration(envOr(getenv, "SLUICE_IDEMPOTENCY_RETENTION", service.DefaultIdempotencyRetention.String()))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_IDEMPOTENCY_RETENTION: %q is not a duration (e.g. 24h)", getenv("SLUICE_IDEMPOTENCY_RETENTION")))
	}
	idemMaxReply, err := strconv.ParseInt(envOr(getenv, "SLUICE_IDEMPOTENCY_MAX_REPLY", strconv.Itoa(service.DefaultMaxStoredReply)), 10, 64)
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_IDEMPOTENCY_MAX_REPLY: %q is not a whole number of bytes", getenv("SLUICE_IDEMPOTENCY_MAX_REPLY")))
	}
	dbTimeout, err := time.ParseDuration(envOr(getenv, "SLUICE_DB_TIMEOUT", db.DefaultCallTimeout.String()))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_DB_TIMEOUT: %q is not a duration (e.g. 15s)", getenv("SLUICE_DB_TIMEOUT")))
	}
	maxConns, err := strconv.Atoi(envOr(getenv, "SLUICE_MAX_CONNS", strconv.Itoa(api.DefaultMaxConns)))
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_MAX_CONNS: %q is not a whole number", getenv("SLUICE_MAX_CONNS")))
	}
	auth := true
	switch v := strings.ToLower(getenv("SLUICE_AUTH")); v {
	case "", "on", "true", "1":
	case "off", "false", "0":
		auth = false
	default:
		errs = append(errs, fmt.Errorf("SLUICE_AUTH: %q is not on or off", v))
	}
	migrate, err := parseBool(getenv("SLUICE_MIGRATE"), true)
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_MIGRATE: %v", err))
	}
	secure, err := parseBool(getenv("SLUICE_SECURE_COOKIES"), false)
	if err != nil {
		errs = append(errs, fmt.Errorf("SLUICE_SECURE_COOKIES: %v", err))
	}
	fs.StringVar(&c.Addr, "addr", envOr(getenv, "SLUICE_ADDR", "127.0.0.1:8080"), "listen address (SLUICE_ADDR)")
	fs.StringVar(&c.DataDir, "data", envOr(getenv, "SLUICE_DATA", "./sluice-data"), "data directory of the embedded store (SLUICE_DATA)")
	fs.Int64Var(&c.BodyLimit, "body-limit", limit, "largest request body in bytes (SLUICE_BODY_LIMIT)")
	fs.Var(onOff{&auth}, "auth", "on or off: require bearer tokens (SLUICE_AUTH; off only on a loopback address)")
	fs.BoolVar(&c.Demo, "demo", false, "load the invented demo scenario if the store has none")
	fs.StringVar(&c.LogLevel, "log-level", envOr(getenv, "SLUICE_LOG_LEVEL", "info"), "debug, info, warn or error (SLUICE_LOG_LEVEL)")
	fs.IntVar(&c.FitWorkers, "fit-workers", workers, "goroutines per bootstrap; 0 = one per CPU (SLUICE_FIT_WORKERS)")
	fs.BoolVar(&migrate, "migrate", migrate, "apply the store's migrations at start; false only checks they were applied (SLUICE_MIGRATE)")
	fs.StringVar(&c.Role, "role", envOr(getenv, "SLUICE_ROLE", "all"), "api (HTTP only), worker (plate jobs; HTTP for health and metrics) or all (SLUICE_ROLE)")
	fs.DurationVar(&c.ShutdownGrace, "shutdown-grace", grace, "on SIGTERM, how long running plate jobs and requests may finish (SLUICE_SHUTDOWN_GRACE)")
	fs.DurationVar(&c.SyncBudget, "sync-budget", syncBudget, "estimated CPU time a fit, Schild, potential or operational request may take before it answers; above it, queued (SLUICE_SYNC_BUDGET)")
	fs.DurationVar(&c.WorkLimit, "work-limit", workLimit, "estimated CPU time above which a request is refused with a 422 (SLUICE_WORK_LIMIT)")
	fs.DurationVar(&c.JobTimeout, "job-timeout", jobTimeout, "ceiling of a queued job's timeout, which scales with its work (30s + 10 × its estimated CPU time); 0 = 10m (SLUICE_JOB_TIMEOUT)")
	fs.DurationVar(&c.JobRescueAfter, "job-rescue-after", jobRescue, "a job running this long, and longer than its own timeout, is taken for orphaned and retried; 0 = 1m (SLUICE_JOB_RESCUE_AFTER)")
	fs.DurationVar(&c.IdemRetention, "idempotency-retention", idemRetention, "how long a reply is kept under its Idempotency-Key (SLUICE_IDEMPOTENCY_RETENTION)")
	fs.Int64Var(&c.IdemMaxReply, "idempotency-max-reply", idemMaxReply, "largest reply body in bytes stored under an Idempotency-Key; a larger one is not replayed (409) (SLUICE_IDEMPOTENCY_MAX_REPLY)")
	fs.BoolVar(&c.SecureCookies, "secure-cookies", secure, "mark the dashboard's session cookie Secure on plain HTTP, behind a TLS proxy (SLUICE_SECURE_COOKIES)")
	fs.DurationVar(&c.DBTimeout, "db-timeout", dbTimeout, "longest call to the database; past it, 503 with Retry-After (SLUICE_DB_TIMEOUT)")
	fs.IntVar(&c.MaxConns, "max-conns", maxConns, "HTTP connections served at once; more are answered 503 and closed (SLUICE_MAX_CONNS)")
	if err := fs.Parse(args); err != nil {
		return nil, err
	}
	if fs.NArg() > 0 {
		errs = append(errs, fmt.Errorf("unexpected arguments %q", fs.Args()))
	}
	c.AuthDisabled = !auth
	c.SkipMigrations = !migrate
	c.DatabaseURL = getenv("SLUICE_DATABASE_URL")
	c.AdminToken = getenv("SLUICE_ADMIN_TOKEN")
	errs = append(errs, c.validate()...)
	return c, errors.Join(errs...)
}

func (c *serveConfig) validate() []error {
	var errs []error
	host, port, err := net.SplitHostPort(c.Addr)
	if err != nil {
		errs = append(errs, fmt.Errorf("--addr / SLUICE_ADDR: %q is not host:port", c.Addr))
	} else if p, err := strconv.Atoi(port); err != nil || p < 0 || p > 65535 {
		errs = append(errs, fmt.Errorf("--addr / SLUICE_ADDR: port %q is not 0–65535", port))
	}
	if c.AuthDisabled && !isLoopback(host) {
		errs = append(errs, fmt.Errorf("--auth=false / SLUICE_AUTH=off: refused on %q; serving without tokens is allowed only on a loopback address", c.Addr))
	}
	if c.BodyLimit < 1024 || c.BodyLimit > maxBodyLimit {
		errs = append(errs, fmt.Errorf("--body-limit / SLUICE_BODY_LIMIT: %d is outside 1024–%d bytes", c.BodyLimit, maxBodyLimit))
	}
	if c.Role != "api" && c.Role != "worker" && c.Role != "all" {
		errs = append(errs, fmt.Errorf("--role / SLUICE_ROLE: %q is not api, worker or all", c.Role))
	}
	if c.ShutdownGrace < 0 || c.ShutdownGrace > maxShutdownGrace {
		errs = append(errs, fmt.Errorf("--shutdown-grace / SLUICE_SHUTDOWN_GRACE: %v is outside 0–%v", c.ShutdownGrace, maxShutdownGrace))
	}
	if c.SyncBudget < minBudget || c.WorkLimit > maxBudget || c.SyncBudget > c.WorkLimit {
		errs = append(errs, fmt.Errorf("--sync-budget / SLUICE_SYNC_BUDGET and --work-limit / SLUICE_WORK_LIMIT: want %v ≤ %v ≤ %v ≤ %v",
			minBudget, c.SyncBudget, c.WorkLimit, maxBudget))
	}
	if err := validateJobTiming(c.JobTimeout, c.JobRescueAfter); err != nil {
		errs = append(errs, err)
	}
	if c.IdemRetention < minIdemRetention || c.IdemRetention > maxIdemRetention {
		errs = append(errs, fmt.Errorf("--idempotency-retention / SLUICE_IDEMPOTENCY_RETENTION: %v is outside %v–%v", c.IdemRetention, minIdemRetention, maxIdemRetention))
	}
	if c.IdemMaxReply < minIdemMaxReply || c.IdemMaxReply > maxIdemMaxReply {
		errs = append(errs, fmt.Errorf("--idempotency-max-reply / SLUICE_IDEMPOTENCY_MAX_REPLY: %d is outside %d–%d bytes", c.IdemMaxReply, minIdemMaxReply, maxIdemMaxReply))
	}
	if c.DBTimeout < db.MinCallTimeout || c.DBTimeout > db.MaxCallTimeout {
		errs = append(errs, fmt.Errorf("--db-timeout / SLUICE_DB_TIMEOUT: %v is outside %v–%v", c.DBTimeout, db.MinCallTimeout, db.MaxCallTimeout))
	}
	if c.MaxConns < minMaxConns || c.MaxConns > maxMaxConns {
		errs = append(errs, fmt.Errorf("--max-conns / SLUICE_MAX_CONNS: %d is outside %d–%d", c.MaxConns, minMaxConns, maxMaxConns))
	}
	if c.FitWorkers < 0 {
		errs = append(errs, fmt.Errorf("--fit-workers / SLUICE_FIT_WORKERS: %d is negative", c.FitWorkers))
	}
	if _, err := parseLevel(c.LogLevel); err != nil {
		errs = append(errs, fmt.Errorf("--log-level / SLUICE_LOG_LEVEL: %v", err))
	}
	if c.DatabaseURL != "" {
		u, err := url.Parse(c.DatabaseURL)
		if err != nil || (u.Scheme != "postgres" && u.Scheme != "postgresql") {
			errs = append(errs, errors.New("SLUICE_DATABASE_URL: want a postgres:// URL"))
		}
	} else if c.DataDir == "" {
		errs = append(errs, errors.New("--data / SLUICE_DATA: empty; the embedded store needs a directory"))
	}
	if c.AdminToken != "" && len(c.AdminToken) < 16 {
		errs = append(errs, errors.New("SLUICE_ADMIN_TOKEN: shorter than 16 characters"))
	}
	return errs
}

// parseBool reads an on/off variable; "" is def.
func parseBool(v string, def bool) (bool, error) {
	switch strings.ToLower(v) {
	case "":
		return def, nil
	case "on", "true", "1":
		return true, nil
	case "off", "false", "0":
		return false, nil
	}
	return def, fmt.Errorf("%q is not true or false", v)
}

func isLoopback(host string) bool {
	if host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

func parseLevel(s string) (slog.Level, error) {
	var l slog.Level
	err := l.UnmarshalText([]byte(s))
	if err != nil {
		return 0, fmt.Errorf("%q is not debug, info, warn or error", s)
	}
	return l, nil
}

// logValue is the configuration for the start-up log, secrets hidden.
func (c *serveConfig) logAttrs() []any {
	store := "sqlite:" + c.DataDir
	if c.DatabaseURL != "" {
		store = redactURL(c.DatabaseURL)
	}
	admin := "unset"
	if c.AdminToken != "" {
		admin = "set (hidden)"
	}
	return []any{"addr", c.Addr, "store", store, "body_limit", c.BodyLimit, "auth", !c.AuthDisabled,
		"admin_token", admin, "demo", c.Demo, "log_level", c.LogLevel, "fit_workers", c.FitWorkers, "role", c.Role,
		"shutdown_grace", c.ShutdownGrace.String(), "migrate", !c.SkipMigrations,
		"sync_budget", c.SyncBudget.String(), "work_limit", c.WorkLimit.String(),
		"job_timeout", c.JobTimeout.String(), "job_rescue_after", c.JobRescueAfter.String(),
		"idempotency_retention", c.IdemRetention.String(), "idempotency_max_reply", c.IdemMaxReply, "secure_cookies", c.SecureCookies,
		"db_timeout", c.DBTimeout.String(), "max_conns", c.MaxConns}
}

// redactURL hides a URL's password.
func redactURL(s string) string {
	u, err := url.Parse(s)
	if err != nil {
		return "(unparseable URL hidden)"
	}
	return u.Redacted()
}

// budget is the service's budget for the configured durations: CPU time
// in cost units (cost.NanosecondsPerUnit each).
func (c *serveConfig) budget() service.Budget {
	return service.Budget{Sync: workOf(c.SyncBudget), Hard: workOf(c.WorkLimit)}
}

func workOf(d time.Duration) cost.Work {
	return cost.Work(float64(d.Nanoseconds()) / cost.NanosecondsPerUnit)
}

func durationOf(w cost.Work) time.Duration {
	return time.Duration(float64(w) * cost.NanosecondsPerUnit).Round(time.Millisecond)
}

// Bounds of --job-timeout and --job-rescue-after (when not zero).
const (
	minRescueAfter = time.Second
	maxJobTiming   = 24 * time.Hour
)

// validateJobTiming checks the two settings; they need no order between
// them, since River's rescuer leaves a job alone until its own timeout
// has passed too (db.RescueBound).
func validateJobTiming(timeout, rescue time.Duration) error {
	if timeout != 0 && (timeout < db.MinJobTimeout || timeout > maxJobTiming) {
		return fmt.Errorf("--job-timeout / SLUICE_JOB_TIMEOUT: %v is outside %v–%v (or 0 for %v)", timeout, db.MinJobTimeout, maxJobTiming, db.DefaultJobTimeout)
	}
	if rescue != 0 && (rescue < minRescueAfter || rescue > maxJobTiming) {
		return fmt.Errorf("--job-rescue-after / SLUICE_JOB_RESCUE_AFTER: %v is outside %v–%v (or 0 for %v)", rescue, minRescueAfter, maxJobTiming, db.DefaultRescueAfter)
	}
	return nil
}

// onOff is a flag that takes on/off, true/false or 1/0 as its value, so
// that "--auth off" works as the README writes it (a bool flag would read
// "off" as an argument) and so does "--auth=false".
type onOff struct{ v *bool }

func (o onOff) String() string {
	if o.v == nil || *o.v {
		return "on"
	}
	return "off"
}

func (o onOff) Set(s string) error {
	switch strings.ToLower(s) {
	case "on", "true", "1":
		*o.v = true
	case "off", "false", "0":
		*o.v = false
	default:
		return fmt.Errorf("%q is not on or off", s)
	}
	return nil
}
