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
	level, _ := parseLevel(cfg.LogLevel)
	log := slog.New(slog.NewJSONHandler(stderr, &slog.HandlerOptions{Level: level}))
	log.Info("starting", cfg.logAttrs()...)

	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	store, err := db.OpenWith(ctx, cfg.DatabaseURL, cfg.DataDir, db.Options{SkipMigrations: !cfg.Migrate})
	if err != nil {
		log.Error("open store", "err", err)
		return 1
	}
	defer store.Close()
	if cfg.AdminToken != "" {
		if err := seedAdminToken(ctx, store, cfg.AdminToken); err != nil {
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
	srv, err := api.New(api.Config{BodyLimit: cfg.BodyLimit, AuthDisabled: cfg.AuthDisabled, FitWorkers: cfg.FitWorkers},
		api.Deps{Store: store, Registry: prometheus.NewRegistry(), Log: log})
	if err != nil {
		log.Error("build server", "err", err)
		return 1
	}
	if cfg.Role != "api" {
		// Two plates at a time: each already fits its curves on every core.
		if err := store.StartWorkers(ctx, srv.FitPlate, 2); err != nil {
			log.Error("start workers", "err", err)
			return 1
		}
		defer func() {
			stopCtx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
			defer cancel()
			store.StopWorkers(stopCtx)
		}()
		log.Info("plate workers started")
	}
	hs := &http.Server{
		Addr:              cfg.Addr,
		Handler:           srv.Handler(),
		ReadHeaderTimeout: 10 * time.Second,
		ReadTimeout:       60 * time.Second,
		WriteTimeout:      5 * time.Minute, // a large bootstrap is computed before the reply
		IdleTimeout:       2 * time.Minute,
		ErrorLog:          slog.NewLogLogger(log.Handler(), slog.LevelWarn),
	}
	ln, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		log.Error("listen", "addr", cfg.Addr, "err", err)
		return 1
	}
	log.Info("listening", "addr", ln.Addr().String(), "store", store.Engine())
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		log.Error("serve", "err", err)
		return 1
	case <-ctx.Done():
	}
	log.Info("shutting down")
	shutCtx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	if err := hs.Shutdown(shutCtx); err != nil {
		log.Error("shutdown", "err", err)
		return 1
	}
	log.Info("stopped")
	return 0
}

// seedAdminToken makes SLUICE_ADMIN_TOKEN a valid admin token named
// "env-admin", replacing the one seeded before.
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
