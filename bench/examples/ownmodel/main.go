// Command ownmodel benchmarks a model of one's own with estbench, in one's
// own binary: it adds the survey drone of drone.go to the built-in
// catalogue, reads a suite that may name it (drone.toml when -suite is not
// given), runs it and prints the summary table.
//
//	go run ./bench/examples/ownmodel -runs 20
//	go run ./bench/examples/ownmodel -suite my.toml -format markdown
//
// The recipe is in DEVELOPERS.md, "How to benchmark a model of your own".
package main

import (
	_ "embed"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/results"
)

//go:embed drone.toml
var droneSuite []byte

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// Exit codes, as estbench's: 0 ok, 1 a run failed, 2 bad usage or input.
const (
	exitOK     = 0
	exitFailed = 1
	exitUsage  = 2
)

// run is the whole program, with its arguments and outputs passed in so
// that the test can call it.
func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("ownmodel", flag.ContinueOnError)
	fs.SetOutput(stderr)
	suitePath := fs.String("suite", "", "suite `FILE` (TOML); the embedded drone.toml if empty")
	runs := fs.Int("runs", 0, "Monte Carlo runs `N`, overriding the suite's")
	workers := fs.Int("workers", 0, "runs computed in parallel (0: one per CPU); never changes results")
	format := fs.String("format", "table", "summary format: "+strings.Join(results.Formats, ", "))
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return exitOK
		}
		return exitUsage
	}
	if *runs < 0 || *workers < 0 || fs.NArg() > 0 {
		fmt.Fprintln(stderr, "ownmodel: --runs and --workers must not be negative, and no arguments are taken")
		return exitUsage
	}

	// The catalogue: every built-in problem and filter, and the drone.
	cat := bench.Builtin()
	cat.Problems = append(cat.Problems, DroneSpec())

	file, data := "drone.toml", droneSuite
	if *suitePath != "" {
		b, err := os.ReadFile(*suitePath)
		if err != nil {
			fmt.Fprintf(stderr, "ownmodel: %v\n", err)
			return exitUsage
		}
		file, data = *suitePath, b
	}
	s, err := bench.ParseSuite(file, data, cat)
	if err != nil {
		fmt.Fprintf(stderr, "ownmodel: %v\n", err) // file:line: key: message
		return exitUsage
	}
	if *runs > 0 {
		s.Runs = *runs
	}

	out, err := bench.Run(s, bench.Options{Workers: *workers})
	if err != nil {
		fmt.Fprintf(stderr, "ownmodel: %v\n", err)
		return exitFailed
	}
	rows := make([]results.SummaryRow, len(out.Pairs))
	for i, p := range out.Pairs {
		rows[i] = results.SummaryRow{Problem: p.Problem, Filter: p.Filter, Config: p.Config, Applicable: p.Applicable,
			Note: p.Note, Summary: p.Summary, AllocsPerStep: p.AllocsPerStep, EvalsPerStep: p.EvalsPerStep}
	}
	prov := results.Provenance{Suite: s.Name, SuiteSHA256: s.Hash(), Seed: s.Seed, Runs: s.Runs, Tool: "ownmodel", Date: out.End}
	if err := results.WriteSummary(stdout, *format, rows, prov); err != nil {
		fmt.Fprintf(stderr, "ownmodel: %v\n", err)
		return exitUsage
	}
	return exitOK
}
