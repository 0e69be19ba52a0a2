package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"os"
	"os/signal"
	"syscall"
	"time"

	"github.com/prometheus/client_golang/prometheus"

	"sluice/api"
	"sluice/api/web"
	"sluice/db"
)

// runServe is `sluice serve`: the HTTP API on the configured store, until
// SIGINT or SIGTERM, then a graceful shutdown.
func runServe(args []string, getenv func(string) string, stderr io.Writer) int {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	fs.SetOutput(stderr)
	cfg, err := loadServeConfig(args, getenv, fs)
	if errors.Is(err, flag.ErrHelp) {
		return 0
	}
	if err != nil {
		fmt.Fprintf(stderr, "sluice serve: configuration:\n%v\n", err)
		return 2
	}
	level, _ := parseLevel(cfg.LogLevel) // validated by loadServeConfig
	log := slog.New(slog.NewJSONHandler(stderr, &slog.HandlerOptions{Level: level}))
	log.Info("starting", cfg.logAttrs()...)

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	go func() {
		// After the first signal, a second one ends the process at once.
		<-ctx.Done()
		stop()
	}()
	ln, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		log.Error("listen", "addr", cfg.Addr, "err", err)
		return 1
	}
	return serve(ctx, cfg, ln, log)
}

// serve runs the server on ln until ctx is done, then shuts down: the
// listener closes, and running HTTP requests and plate jobs get
// cfg.ShutdownGrace to finish (River's soft stop: no new job is fetched);
// what is still running then is cancelled, and a cancelled job is retried
// later. With --role worker, HTTP serves only /healthz, /readyz and
// /metrics.
func serve(ctx context.Context, cfg *serveConfig, ln net.Listener, log *slog.Logger) int {
	defer ln.Close() // closed already by Shutdown, unless serving never began
	store, err := db.OpenWith(ctx, cfg.DatabaseURL, cfg.DataDir, db.Options{SkipMigrations: cfg.SkipMigrations, Logger: log,
		JobTimeout: cfg.JobTimeout, RescueAfter: cfg.JobRescueAfter, CallTimeout: cfg.DBTimeout})
	if err != nil {
		log.Error("open store", "err", err)
		return 1
	}
	defer store.Close()
	if cfg.AdminToken != "" {
		err := seedAdminToken(ctx, store, cfg.AdminToken)
		switch {
		case errors.Is(err, db.ErrExists):
			log.Warn("SLUICE_ADMIN_TOKEN: the token env-admin was revoked and stays revoked; create another with `sluice token create`")
		case err != nil:
			log.Error("seed admin token", "err", err)
			return 1
		}
	}
	if cfg.Demo {
		n, err := loadDemo(ctx, store)
		if err != nil {
			log.Error("demo", "err", err)
			return 1
		}
		log.Info("demo scenario", "fits_loaded", n)
	}
	srv, err := api.New(api.Config{BodyLimit: cfg.BodyLimit, AuthDisabled: cfg.AuthDisabled, FitWorkers: cfg.FitWorkers,
		IdempotencyRetention: cfg.IdemRetention, MaxStoredReply: int(cfg.IdemMaxReply), Web: web.Config{SecureCookies: cfg.SecureCookies}},
		api.Deps{Store: store, Registry: prometheus.NewRegistry(), Log: log, Budget: cfg.budget()})
	if err != nil {
		log.Error("build server", "err", err)
		return 1
	}
	handler := srv.Handler()
	if cfg.Role == "worker" {
		handler = srv.OpsHandler()
	}
	workers := cfg.Role != "api"
	if workers {
		// Jobs run on a context the signal does not cancel (cancelling
		// River's start context is its hard stop); StopWorkers below
		// ends them softly.
		// Two jobs at a time: each already fits its curves on every core.
		// Plates, and single analyses over the synchronous budget.
		svc := srv.Service()
		if err := store.StartHandlers(context.WithoutCancel(ctx), db.Handlers{Plate: svc.RunPlateJob, Analysis: svc.RunAnalysis, Failed: svc.JobFailed}, 2); err != nil {
			log.Error("start workers", "err", err)
			return 1
		}
		log.Info("workers started")
		// Every worker sweeps (each step is idempotent): plates whose job
		// the queue discarded are marked failed, expired idempotency
		// records deleted.
		sweepCtx, stopSweeps := context.WithCancel(context.WithoutCancel(ctx))
		sweepsDone := make(chan struct{})
		go func() { defer close(sweepsDone); svc.RunSweeps(sweepCtx, 0) }()
		defer func() { stopSweeps(); <-sweepsDone }()
	}
	// Slow clients are bounded: the headers must arrive within
	// ReadHeaderTimeout, a body within api.BodyReadTimeout of its size
	// (ReadTimeout is the ceiling, for the largest body allowed), an idle
	// keep-alive connection is closed after IdleTimeout, and at most
	// cfg.MaxConns connections are served at once (api.LimitListener).
	// net/http itself answers a request it cannot parse (400) or whose
	// headers exceed MaxHeaderBytes (431) in plain text, before any handler
	// runs: http.Server has no hook to shape those answers, so they stay
	// text (deploy/README.md).
	hs := &http.Server{
		Handler:           handler,
		ReadHeaderTimeout: 10 * time.Second,
		ReadTimeout:       api.BodyReadTimeout(cfg.BodyLimit),
		WriteTimeout:      5 * time.Minute, // a large bootstrap is computed before the reply
		IdleTimeout:       time.Minute,
		MaxHeaderBytes:    maxHeaderBytes,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
	}
	hs.RegisterOnShutdown(srv.Drain) // waiting requests answer 202 at once
	log.Info("listening", "addr", ln.Addr().String(), "store", store.Engine(), "role", cfg.Role)
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(srv.LimitListener(ln, cfg.MaxConns)) }()
	code := 0
	select {
	case err := <-errc:
		log.Error("serve", "err", err)
		code = 1
	case <-ctx.Done():
		log.Info("shutting down", "grace", cfg.ShutdownGrace.String())
	}
	graceCtx, cancel := context.WithTimeout(context.Background(), cfg.ShutdownGrace)
	defer cancel()
	// HTTP and the workers drain side by side, within one grace period.
	stopped := make(chan error, 1)
	go func() {
		if !workers {
			stopped <- nil
			return
		}
		stopped <- store.StopWorkers(graceCtx)
	}()
	if err := hs.Shutdown(graceCtx); err != nil {
		log.Error("HTTP shutdown: requests cut off after the grace period", "err", err)
		if cerr := hs.Close(); cerr != nil {
			log.Error("HTTP close", "err", cerr)
		}
		code = 1
	}
	if err := <-stopped; err != nil {
		log.Error("stop plate workers", "err", err)
		code = 1
	}
	log.Info("stopped")
	return code
}

// maxHeaderBytes bounds a request's header section (net/http's default is
// 1 MiB): Sluice's requests carry a token, an Idempotency-Key and a few
// standard headers.
const maxHeaderBytes = 64 << 10

// seedAdminToken makes SLUICE_ADMIN_TOKEN a valid admin token named
// "env-admin", replacing the one seeded before, unless that one was
// revoked (db.ErrExists): a revoked token is never brought back.
func seedAdminToken(ctx context.Context, store db.Store, secret string) error {
	return store.Write(ctx, func(w db.Writer) error {
		return w.UpsertToken(ctx, &db.Token{ID: "env-admin", Name: "env-admin", Scope: api.ScopeAdmin,
			Hash: api.HashToken(secret), CreatedAt: time.Now().UTC()})
	})
}

// storeFlags adds --data to a command that opens the store; the database
// URL comes from SLUICE_DATABASE_URL as for serve.
func storeFlags(fs *flag.FlagSet, getenv func(string) string) *string {
	return fs.String("data", envOr(getenv, "SLUICE_DATA", "./sluice-data"), "data directory of the embedded store (SLUICE_DATA)")
}

// runMigrate is `sluice migrate`: apply the migrations (under a lock on
// PostgreSQL) and exit.
func runMigrate(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("migrate", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	url := getenv("SLUICE_DATABASE_URL")
	if err := db.Migrate(context.Background(), url, *data, 0); err != nil {
		fmt.Fprintf(stderr, "sluice migrate: %v\n", err)
		return 1
	}
	engine := "sqlite"
	if url != "" {
		engine = "postgres"
	}
	fmt.Fprintf(stdout, "sluice migrate: %s store is up to date\n", engine)
	return 0
}
