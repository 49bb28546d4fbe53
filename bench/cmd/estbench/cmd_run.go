package main

import (
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

const runUsage = `Usage: estbench run [flags]

Runs every filter configuration of a suite over Monte Carlo runs of its
problems, prints the summary table and writes the result files:
summary.parquet, runs.parquet, curves.parquet, summary.md, manifest.json.
Without --suite the built-in default suite runs.

--sweep-particles LO:HI replaces the particle counts of every particle
filter of the suite (every filter with a particles parameter: pf in the
default suite, whose kf, ekf and ukf stay as the cheap end of the front)
by LO, HI and the 1-2-5 values between them (100:100000 gives 100, 200,
500, 1000, ..., 100000), or by --sweep-steps N counts in geometric
progression; 'estbench budget' then picks from the result.

Flags:
`

func cmdRun(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("run", flag.ContinueOnError)
	fs.SetOutput(stderr)
	suitePath := fs.String("suite", "", "suite `FILE` (TOML); the built-in default suite if empty")
	runs := fs.Int("runs", 0, "Monte Carlo runs `N`, overriding the suite's")
	seed := fs.String("seed", "", "suite seed `N` (unsigned integer), overriding the suite's")
	workers := fs.Int("workers", 0, "runs computed in parallel (0: one per CPU); never changes results")
	outDir := fs.String("out", "", "result `DIR` (default estbench-out/<UTC timestamp>)")
	format := fs.String("format", "table", "summary format on stdout: "+strings.Join(results.Formats, ", "))
	sweep := fs.String("sweep-particles", "", "replace the particle counts of every particle filter by `LO:HI` in 1-2-5 steps per decade")
	sweepSteps := fs.Int("sweep-steps", 0, "with --sweep-particles: `N` counts in geometric progression instead of 1-2-5 steps")
	fs.Usage = func() {
		fmt.Fprint(stderr, runUsage)
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		return usageExit(err)
	}
	if fs.NArg() > 0 {
		fmt.Fprintf(stderr, "estbench run: unexpected argument %q\n", fs.Arg(0))
		return exitUsage
	}
	if !slices.Contains(results.Formats, *format) {
		fmt.Fprintf(stderr, "estbench run: unknown format %q%s; valid: %s\n", *format, didYouMean(*format, results.Formats), strings.Join(results.Formats, ", "))
		return exitUsage
	}
	if *runs < 0 || *workers < 0 {
		fmt.Fprintln(stderr, "estbench run: --runs and --workers must not be negative")
		return exitUsage
	}

	cat := bench.Builtin()
	file, data := "built-in default suite", bench.DefaultSuite
	if *suitePath != "" {
		b, err := os.ReadFile(*suitePath)
		if err != nil {
			fmt.Fprintf(stderr, "estbench run: %v\n", err)
			return exitUsage
		}
		file, data = *suitePath, b
	}
	s, err := bench.ParseSuite(file, data, cat)
	if err != nil {
		fmt.Fprintf(stderr, "estbench run: %v\n", err)
		return exitUsage
	}
	if *runs > 0 {
		s.Runs = *runs
	}
	if *seed != "" {
		v, err := parseSeed(*seed)
		if err != nil {
			fmt.Fprintf(stderr, "estbench run: --seed: %v\n", err)
			return exitUsage
		}
		s.Seed = v
	}
	if *sweepSteps != 0 && *sweep == "" {
		fmt.Fprintln(stderr, "estbench run: --sweep-steps needs --sweep-particles")
		return exitUsage
	}
	if *sweep != "" {
		counts, err := parseSweep(*sweep, *sweepSteps)
		if err == nil {
			_, err = sweepParticles(s, counts)
		}
		if err != nil {
			fmt.Fprintf(stderr, "estbench run: --sweep-particles: %v\n", err)
			return exitUsage
		}
	}

	start := time.Now().UTC()
	dir := *outDir
	if dir == "" {
		dir = filepath.Join("estbench-out", start.Format("20060102T150405Z"))
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		fmt.Fprintf(stderr, "estbench run: %v\n", err)
		return exitFailed
	}
	prog := newProgress(stderr, len(s.Problems)*s.Runs)
	res, err := cli.WriteRun(s, dir, cli.RunOptions{Workers: *workers, Progress: prog.set, Command: os.Args})
	prog.finish()
	if err != nil {
		fmt.Fprintf(stderr, "estbench run: %v\n", err)
		if errors.As(err, new(*bench.SuiteError)) {
			return exitUsage
		}
		return exitFailed
	}
	rows, prov := res.Rows, res.Provenance
	if err := results.WriteSummary(stdout, *format, rows, prov); err != nil {
		fmt.Fprintf(stderr, "estbench run: %v\n", err)
		return exitFailed
	}
	fmt.Fprintf(stderr, "estbench: results in %s\n", dir)
	return exitOK
}
