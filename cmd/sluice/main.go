// Command sluice is the Sluice binary: the fit engine on the command line,
// the HTTP service, and the tools that set its store up.
package main

import (
	"fmt"
	"io"
	"os"

	"github.com/gin-gonic/gin"
)

const usage = `sluice — concentration–response fitting for ligand-gated ion channels

Usage:
  sluice fit FILE|- [flags]        fit curves from a CSV file (conc,response[,weight][,curve])
  sluice serve [flags]             run the HTTP API (SLUICE_* environment variables, see README)
  sluice submit --server URL --token T [--wait] FILE…
                                   post plate files (JSON, long CSV, or grids with --layout)
  sluice migrate                   apply the database migrations
  sluice token create --scope S --name N
                                   print a new API token (read, submit or admin)
  sluice token list                list the API tokens (never their secrets)
  sluice token revoke NAME         revoke an API token
  sluice history COMPOUND --assay A --server URL --token T [--format table|json|csv]
                                   a compound's potency history and its summary
  sluice demo                      load the invented demo scenario into the store
  sluice seed --plates N --curves-per-plate M [--assays A --compounds C --seed S]
                                   fill the store with an invented database of that size
  sluice potential REQUEST.json|-  predict the membrane-potential shift of an agonist (offline)
  sluice schild FILE|- [flags]     Schild analysis of shifted agonist curves (offline)

Run "sluice COMMAND -h" for a command's flags.
`

func main() {
	// gin's mode is process-wide; set it once, before any router is built.
	gin.SetMode(gin.ReleaseMode)
	os.Exit(run(os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// run dispatches a subcommand and returns the process exit code: 0 on
// success, 1 when the work failed, 2 for bad usage or bad input.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return 2
	}
	switch args[0] {
	case "fit":
		return runFit(args[1:], stdin, stdout, stderr)
	case "serve":
		return runServe(args[1:], os.Getenv, stderr)
	case "submit":
		return runSubmit(args[1:], os.Getenv, stdout, stderr)
	case "migrate":
		return runMigrate(args[1:], os.Getenv, stdout, stderr)
	case "token":
		return runToken(args[1:], os.Getenv, stdout, stderr)
	case "schild":
		return runSchild(args[1:], stdin, stdout, stderr)
	case "potential":
		return runPotential(args[1:], stdin, stdout, stderr)
	case "history":
		return runHistory(args[1:], os.Getenv, stdout, stderr)
	case "demo":
		return runDemo(args[1:], os.Getenv, stdout, stderr)
	case "seed":
		return runSeed(args[1:], os.Getenv, stdout, stderr)
	case "-h", "--help", "help":
		fmt.Fprint(stdout, usage)
		return 0
	}
	fmt.Fprintf(stderr, "sluice: unknown command %q\n\n%s", args[0], usage)
	return 2
}
