// Command ownmodel benchmarks a model of one's own with estbench, in one's
// own binary: it adds the survey drone of drone.go to the built-in
// catalogue, reads a suite that may name it (drone.toml when -suite is not
// given), runs it into a result folder like estbench run's (so estbench
// report and estbench compare read it) and prints the summary table.
//
//	go run ./bench/examples/ownmodel -runs 20
//	go run ./bench/examples/ownmodel -suite my.toml -out results/drone -format markdown
//
// The recipe is in DEVELOPERS.md, "How to benchmark a model of your own".
package main

import (
	_ "embed"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/bench/cli"
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
	outDir := fs.String("out", "", "result `DIR` (default ownmodel-out/<UTC timestamp>)")
	if err := fs.Parse(args); err != nil {
		if err == flag.ErrHelp {
			return exitOK
		}
		return exitUsage
	}
	if *runs < 0 || *workers < 0 || fs.NArg() > 0 || !slices.Contains(results.Formats, *format) {
		fmt.Fprintf(stderr, "ownmodel: --runs and --workers must not be negative, --format is one of %s, and no arguments are taken\n",
			strings.Join(results.Formats, ", "))
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

	// Run it into a result folder, as estbench run does.
	dir := *outDir
	if dir == "" {
		dir = filepath.Join("ownmodel-out", time.Now().UTC().Format("20060102T150405Z"))
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		fmt.Fprintf(stderr, "ownmodel: %v\n", err)
		return exitFailed
	}
	res, err := cli.WriteRun(s, dir, cli.RunOptions{Workers: *workers, Command: os.Args, Tool: "ownmodel"})
	if err != nil {
		fmt.Fprintf(stderr, "ownmodel: %v\n", err)
		if errors.As(err, new(*bench.SuiteError)) {
			return exitUsage
		}
		return exitFailed
	}
	if err := results.WriteSummary(stdout, *format, res.Rows, res.Provenance); err != nil {
		fmt.Fprintf(stderr, "ownmodel: %v\n", err)
		return exitUsage
	}
	fmt.Fprintf(stderr, "ownmodel: results in %s\n", dir)
	return exitOK
}
