package main

import (
	"flag"
	"fmt"
	"io"
	"path/filepath"
	"slices"
	"strings"

	"github.com/estbench/estbench/results"
)

const budgetUsage = `Usage: estbench budget [flags] DIR (--max-ns-per-step N | --max-evals-per-step N)

Chooses, for each problem of a result folder, the configuration with the
lowest RMSE whose cost per filter step is within the budget: either wall
time (ns_per_step, on the machine that made the results) or model
evaluations (evals_per_step, the same on every machine). It shows the
Pareto front of RMSE against cost, the choice, and what the next point of
the front would buy. Configurations with a diverged run or with ANEES
outside its 95% bounds are left out, and listed, unless
--include-diverged or --include-inconsistent.

To carry a time budget to another machine, run the same suite on both and
divide ns_per_step by evals_per_step for the filter in question on each:
that is the machine's ns per evaluation, and a budget of T ns there is
about T / (ns per evaluation) evaluations. See README.md.

Exit status: 0 when every problem has a configuration within the budget,
1 when some problem has none, 2 on bad usage or input.

Flags:
`

func cmdBudget(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("budget", flag.ContinueOnError)
	fs.SetOutput(stderr)
	maxNs := fs.Float64("max-ns-per-step", 0, "budget `N`: wall time per filter step in ns")
	maxEvals := fs.Float64("max-evals-per-step", 0, "budget `N`: model evaluations per filter step")
	incDiv := fs.Bool("include-diverged", false, "keep configurations with diverged runs")
	incInc := fs.Bool("include-inconsistent", false, "keep configurations whose ANEES is outside its 95% bounds")
	format := fs.String("format", "table", "output format: "+strings.Join(results.BudgetFormats, ", "))
	fs.Usage = func() {
		fmt.Fprint(stderr, budgetUsage)
		fs.PrintDefaults()
	}
	pos, err := parseInterspersed(fs, args)
	if err != nil {
		return usageExit(err)
	}
	if len(pos) != 1 {
		fmt.Fprintf(stderr, "estbench budget: want one result DIR, got %d arguments\n", len(pos))
		return exitUsage
	}
	if !slices.Contains(results.BudgetFormats, *format) {
		fmt.Fprintf(stderr, "estbench budget: unknown format %q%s; valid: %s\n", *format, didYouMean(*format, results.BudgetFormats), strings.Join(results.BudgetFormats, ", "))
		return exitUsage
	}
	opt := results.BudgetOptions{IncludeDiverged: *incDiv, IncludeInconsistent: *incInc}
	switch {
	case (*maxNs != 0) == (*maxEvals != 0):
		fmt.Fprintln(stderr, "estbench budget: give one of --max-ns-per-step and --max-evals-per-step")
		return exitUsage
	case *maxNs != 0:
		opt.Cost, opt.Max = results.CostTime, *maxNs
	default:
		opt.Cost, opt.Max = results.CostEvals, *maxEvals
	}
	if !(opt.Max > 0) {
		fmt.Fprintln(stderr, "estbench budget: the budget must be positive")
		return exitUsage
	}
	dir := pos[0]
	man, err := results.ReadManifest(filepath.Join(dir, "manifest.json"))
	if err != nil {
		fmt.Fprintf(stderr, "estbench budget: %v\n", err)
		return exitUsage
	}
	rows, err := results.ReadSummaryParquet(filepath.Join(dir, "summary.parquet"))
	if err != nil {
		fmt.Fprintf(stderr, "estbench budget: %v\n", err)
		return exitUsage
	}
	plans := results.Budget(rows, opt)
	prov := results.Provenance{Suite: man.Suite, SuiteSHA256: man.SuiteSHA256, Seed: man.Seed, Runs: man.Runs,
		Tool: strings.TrimSpace(man.Tool + " " + man.Version), Date: man.End}
	if err := results.WriteBudget(stdout, *format, plans, opt, prov); err != nil {
		fmt.Fprintf(stderr, "estbench budget: %v\n", err)
		return exitFailed
	}
	if !results.Fits(plans) {
		return exitFailed
	}
	return exitOK
}
