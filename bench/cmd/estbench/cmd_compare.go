package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"

	"github.com/estbench/estbench/results"
)

const compareUsage = `Usage: estbench compare [flags] BASE_DIR NEW_DIR

Compares two result folders of 'estbench run' (summary.parquet, runs.parquet
and manifest.json in each) row by row: problem, filter and config. With the
same seed, run r saw the same data on both sides, and the per-run RMSE and
ANEES are compared paired, with a percentile bootstrap interval of their
relative change; each row is better, worse, same, new or gone. Runtime has
its own verdict (faster, slower, same) beside it.

A row is worse when the interval of the RMSE change lies above zero and
reaches beyond --tolerance, when more runs diverged than before, or when
ANEES left its 95% bounds (or moved further from them beyond the
tolerance). Folders of different suites or seeds are refused unless
--allow-mismatch; with different seeds the rows are then compared unpaired.

Exit status: 0 when no row is worse, 1 when some row is worse (or slower,
with --fail-slower), 2 on bad usage or input.

Flags:
`

func cmdCompare(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("compare", flag.ContinueOnError)
	fs.SetOutput(stderr)
	format := fs.String("format", "table", "output format: "+strings.Join(results.CompareFormats, ", "))
	tol := fraction(0.02)
	fs.Var(&tol, "tolerance", "relative change of RMSE or ANEES within which a row is the same (`F`: 0.02 or 2%)")
	ttol := fraction(0.25)
	fs.Var(&ttol, "time-tolerance", "relative change of the median ns/step within which the runtime is the same (`F`: 0.25 or 25%)")
	level := fraction(0.95)
	fs.Var(&level, "level", "confidence level of the intervals (`F`: 0.95 or 95%)")
	allow := fs.Bool("allow-mismatch", false, "compare folders of different suites or seeds (unpaired when the seeds differ)")
	failSlower := fs.Bool("fail-slower", false, "exit 1 also when a row is slower")
	fs.Usage = func() {
		fmt.Fprint(stderr, compareUsage)
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return usageExit(err)
	}
	if len(pos) != 2 {
		fmt.Fprintf(stderr, "estbench compare: want BASE_DIR and NEW_DIR, got %d arguments\n", len(pos))
		return exitUsage
	}
	if !slices.Contains(results.CompareFormats, *format) {
		fmt.Fprintf(stderr, "estbench compare: unknown format %q%s; valid: %s\n", *format, didYouMean(*format, results.CompareFormats), strings.Join(results.CompareFormats, ", "))
		return exitUsage
	}
	switch {
	case float64(tol) <= 0 || float64(ttol) <= 0:
		fmt.Fprintln(stderr, "estbench compare: --tolerance and --time-tolerance must be positive (use a small value such as 1e-9 for none)")
		return exitUsage
	case !(float64(level) > 0 && float64(level) < 1):
		fmt.Fprintln(stderr, "estbench compare: --level must be between 0 and 1")
		return exitUsage
	}
	base, err := results.ReadResultDir(pos[0])
	if err != nil {
		fmt.Fprintf(stderr, "estbench compare: base: %v\n", err)
		return exitUsage
	}
	cur, err := results.ReadResultDir(pos[1])
	if err != nil {
		fmt.Fprintf(stderr, "estbench compare: new: %v\n", err)
		return exitUsage
	}
	c, err := results.Compare(base, cur, results.CompareOptions{
		Tolerance: float64(tol), TimeTolerance: float64(ttol), Level: float64(level), AllowMismatch: *allow,
	})
	if err != nil {
		fmt.Fprintf(stderr, "estbench compare: %v\n", err)
		return exitUsage
	}
	if err := results.WriteComparison(stdout, *format, c); err != nil {
		fmt.Fprintf(stderr, "estbench compare: %v\n", err)
		return exitFailed
	}
	if c.Count(results.VerdictWorse) > 0 || (*failSlower && c.CountTime(results.TimeSlower) > 0) {
		return exitFailed
	}
	return exitOK
}

// fraction is a flag value written as a fraction (0.02) or a percentage
// (2%).
type fraction float64

func (f *fraction) String() string {
	return strconv.FormatFloat(100*float64(*f), 'g', -1, 64) + "%"
}

func (f *fraction) Set(s string) error {
	t := strings.TrimSpace(s)
	div := 1.0
	if strings.HasSuffix(t, "%") {
		t, div = strings.TrimSuffix(t, "%"), 100
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil {
		return errors.New("want a fraction (0.02) or a percentage (2%)")
	}
	*f = fraction(v / div)
	return nil
}

// parseInterspersed parses flags that may come before, between or after
// the positional arguments ("compare A B --format json"), and returns the
// positional ones; "--" ends the flags.
func parseInterspersed(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		rest := fs.Args()
		if len(rest) == 0 {
			return pos, nil
		}
		if len(args) > 0 && len(rest) < len(args) && args[len(args)-len(rest)-1] == "--" {
			return append(pos, rest...), nil
		}
		pos = append(pos, rest[0])
		args = rest[1:]
	}
}
