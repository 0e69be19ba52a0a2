// Command sluice is the Sluice binary: the fit engine on the command line
// and, in later subcommands, the service.
package main

import (
	"fmt"
	"io"
	"os"
)

const usage = `sluice — concentration–response fitting for ligand-gated ion channels

Usage:
  sluice fit FILE|- [flags]   fit curves from a CSV file (conc,response[,weight][,curve])

Run "sluice COMMAND -h" for a command's flags.
`

func main() {
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
	case "-h", "--help", "help":
		fmt.Fprint(stdout, usage)
		return 0
	}
	fmt.Fprintf(stderr, "sluice: unknown command %q\n\n%s", args[0], usage)
	return 2
}
