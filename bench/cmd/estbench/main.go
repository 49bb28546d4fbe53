// Command estbench runs benchmark suites of state estimators and writes
// RMSE, consistency and runtime tables and files. See README.md.
package main

import (
	"fmt"
	"io"
	"os"
)

func main() {
	os.Exit(dispatch(os.Args[1:], os.Stdout, os.Stderr))
}

// Exit codes.
const (
	exitOK     = 0 // success
	exitFailed = 1 // a run failed
	exitUsage  = 2 // bad usage or bad input
)

const usage = `estbench: benchmark state estimators over Monte Carlo runs

Usage:
  estbench run [flags]        run a suite (the built-in default suite without --suite)
  estbench compare B N        compare result folder N with base folder B row by row; exit 1 when a row is worse
  estbench budget DIR         choose the most accurate configuration within a cost per step
  estbench report DIR         write an HTML report with plots (or a LaTeX/Markdown table) of a result folder
  estbench list               list every problem and filter with parameters, defaults, traits and source
  estbench data import|show   convert recorded sensor data to .arrow files; show one
  estbench data list|fetch    the catalogue of public datasets; download one, checksummed
  estbench version            print the version
  estbench help [command]     show help

Run 'estbench <command> -h' for the flags of a command.
`

var commands = []string{"run", "compare", "budget", "list", "report", "version", "help", "data"}

// dispatch runs the command named by args[0] and returns the exit code.
func dispatch(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, usage)
		return exitUsage
	}
	switch args[0] {
	case "run":
		return cmdRun(args[1:], stdout, stderr)
	case "compare":
		return cmdCompare(args[1:], stdout, stderr)
	case "budget":
		return cmdBudget(args[1:], stdout, stderr)
	case "list":
		return cmdList(args[1:], stdout, stderr)
	case "data":
		return cmdData(args[1:], stdout, stderr)
	case "report":
		return cmdReport(args[1:], stdout, stderr)
	case "version":
		fmt.Fprintln(stdout, "estbench", toolVersion())
		return exitOK
	case "help", "-h", "-help", "--help":
		if len(args) > 1 {
			return dispatch([]string{args[1], "-h"}, stdout, stderr)
		}
		fmt.Fprint(stdout, usage)
		return exitOK
	}
	fmt.Fprintf(stderr, "estbench: unknown command %q%s\n\n%s", args[0], didYouMean(args[0], commands), usage)
	return exitUsage
}
