package main

import (
	"context"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"text/tabwriter"
	"time"

	"sluice/api"
	"sluice/db"
)

const tokenUsage = `usage:
  sluice token create --scope read|submit|admin --name NAME   print a new token once
  sluice token list                                           every token, revoked ones too (never a secret)
  sluice token revoke NAME                                    revoke a token by name (or ID)`

// runToken is `sluice token create|list|revoke`: tokens are managed on the
// store directly, by whoever can reach it; only hashes are stored.
func runToken(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprintln(stderr, tokenUsage)
		return 2
	}
	switch args[0] {
	case "create":
		return runTokenCreate(args[1:], getenv, stdout, stderr)
	case "list":
		return runTokenList(args[1:], getenv, stdout, stderr)
	case "revoke":
		return runTokenRevoke(args[1:], getenv, stdout, stderr)
	}
	fmt.Fprintln(stderr, tokenUsage)
	return 2
}

// runTokenCreate prints a new token once; only its hash is stored.
func runTokenCreate(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("token create", flag.ContinueOnError)
	fs.SetOutput(stderr)
	scope := fs.String("scope", api.ScopeRead, "read, submit or admin")
	name := fs.String("name", "", "a name for the token, e.g. pipeline-3 (shown in the audit log)")
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if !api.ValidScope(*scope) {
		fmt.Fprintf(stderr, "sluice token create: --scope: %q is not read, submit or admin\n", *scope)
		return 2
	}
	if *name == "" {
		fmt.Fprintln(stderr, "sluice token create: --name is required")
		return 2
	}
	ctx := context.Background()
	store, err := db.Open(ctx, getenv("SLUICE_DATABASE_URL"), *data)
	if err != nil {
		fmt.Fprintf(stderr, "sluice token create: %v\n", err)
		return 1
	}
	defer store.Close()
	secret, hash := api.NewToken()
	now := time.Now().UTC()
	detail, err := json.Marshal(map[string]string{"scope": *scope})
	if err != nil {
		fmt.Fprintf(stderr, "sluice token create: %v\n", err)
		return 1
	}
	err = store.Write(ctx, func(w db.Writer) error {
		if err := w.InsertToken(ctx, &db.Token{ID: hash[:16], Name: *name, Scope: *scope, Hash: hash, CreatedAt: now}); err != nil {
			return err
		}
		return w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: "cli", Action: "token.create", Target: *name, Detail: detail})
	})
	if errors.Is(err, db.ErrExists) {
		fmt.Fprintf(stderr, "sluice token create: a token named %q exists; choose another name\n", *name)
		return 2
	}
	if err != nil {
		fmt.Fprintf(stderr, "sluice token create: %v\n", err)
		return 1
	}
	fmt.Fprintln(stdout, secret)
	fmt.Fprintf(stderr, "token %q (scope %s) created; it is shown only this once\n", *name, *scope)
	return 0
}

// runTokenList prints every token: name, ID, scope, created, revoked.
func runTokenList(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("token list", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "sluice token list: unexpected arguments %q\n", fs.Args())
		return 2
	}
	ctx := context.Background()
	store, err := db.Open(ctx, getenv("SLUICE_DATABASE_URL"), *data)
	if err != nil {
		fmt.Fprintf(stderr, "sluice token list: %v\n", err)
		return 1
	}
	defer store.Close()
	toks, err := store.Tokens(ctx)
	if err != nil {
		fmt.Fprintf(stderr, "sluice token list: %v\n", err)
		return 1
	}
	tw := tabwriter.NewWriter(stdout, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "NAME\tID\tSCOPE\tCREATED\tREVOKED")
	for _, t := range toks {
		revoked := "-"
		if t.RevokedAt != nil {
			revoked = t.RevokedAt.Format(time.RFC3339)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%s\n", t.Name, t.ID, t.Scope, t.CreatedAt.Format(time.RFC3339), revoked)
	}
	if err := tw.Flush(); err != nil {
		fmt.Fprintf(stderr, "sluice token list: %v\n", err)
		return 1
	}
	return 0
}

// runTokenRevoke revokes a token by name or ID. A running server stops
// accepting it within its token cache's lifetime (api's tokenTTL, 10 s).
func runTokenRevoke(args []string, getenv func(string) string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("token revoke", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := storeFlags(fs, getenv)
	if err := fs.Parse(args); err != nil {
		return 2
	}
	if fs.NArg() != 1 {
		fmt.Fprintln(stderr, "usage: sluice token revoke NAME")
		return 2
	}
	name := fs.Arg(0)
	ctx := context.Background()
	store, err := db.Open(ctx, getenv("SLUICE_DATABASE_URL"), *data)
	if err != nil {
		fmt.Fprintf(stderr, "sluice token revoke: %v\n", err)
		return 1
	}
	defer store.Close()
	now := time.Now().UTC()
	err = store.Write(ctx, func(w db.Writer) error {
		if err := w.RevokeToken(ctx, name, now); err != nil {
			return err
		}
		return w.InsertAudit(ctx, &db.AuditEntry{At: now, Actor: "cli", Action: "token.revoke", Target: name})
	})
	if errors.Is(err, db.ErrNotFound) {
		fmt.Fprintf(stderr, "sluice token revoke: no unrevoked token named %q\n", name)
		return 2
	}
	if err != nil {
		fmt.Fprintf(stderr, "sluice token revoke: %v\n", err)
		return 1
	}
	fmt.Fprintf(stdout, "token %q revoked\n", name)
	return 0
}
