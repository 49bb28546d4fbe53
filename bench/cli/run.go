// Package cli is the part of the estbench command that other programs
// reuse: running a suite into a result folder. The estbench binary calls it
// after reading its flags, and so can a program of one's own that runs
// suites against an extended catalogue (see bench/examples/ownmodel), so
// that its result folders read like estbench's (estbench report, compare).
//
// # Errors
//
// WriteRun returns the runner's errors as they are (a *bench.SuiteError is
// bad input, exit status 2 in a command; anything else a failed run,
// status 1) and file errors prefixed with the file's name. It never prints.
package cli

import (
	"fmt"
	"path/filepath"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/metrics"
	"github.com/estbench/estbench/results"
)

// RunOptions control WriteRun. The zero value works.
type RunOptions struct {
	// Workers is the number of runs computed in parallel; if zero, one per
	// CPU. It never changes the results; it is recorded in the manifest.
	Workers int
	// Progress, if not nil, is called after each finished run (bench.Options).
	Progress func(done, total int)
	// Command is the command line recorded in manifest.json.
	Command []string
	// Tool names the program in the manifest and in the tables'
	// provenance line (followed by the main module's version); if empty,
	// "estbench" is used.
	Tool string
}

// Result is what WriteRun produced.
type Result struct {
	Outcome    *bench.Outcome
	Rows       []results.SummaryRow // one per pair, in suite order
	Provenance results.Provenance   // the line printed under each table
	Files      []string             // the files written into the folder, in order
}

// WriteRun runs suite s and writes its result folder dir, which must exist:
// runs.parquet while the runs finish, then summary.parquet, curves.parquet,
// summary.md and manifest.json, each written to a temporary file and
// renamed into place. On an error of the run, runs.parquet is removed.
func WriteRun(s *bench.Suite, dir string, opt RunOptions) (*Result, error) {
	rw, err := results.NewRunsWriter(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		return nil, err
	}
	var writeErr error
	out, err := bench.Run(s, bench.Options{
		Workers:  opt.Workers,
		Progress: opt.Progress,
		OnRun: func(p *bench.Pair, st metrics.RunStat) {
			if writeErr == nil {
				writeErr = rw.Write(results.RunRow{Problem: p.Problem, Filter: p.Filter, Config: p.Config, RunStat: st})
			}
		},
	})
	if err == nil {
		err = writeErr
	}
	if err != nil {
		rw.Abort()
		return nil, err
	}
	if err := rw.Close(); err != nil {
		return nil, err
	}

	rows := SummaryRows(out)
	man := results.CollectEnvironment()
	man.Suite = s.Name
	man.SuiteSHA256 = s.Hash()
	man.Seed = s.Seed
	man.Runs = s.Runs
	man.Workers = opt.Workers
	man.Command = opt.Command
	man.Start, man.End = out.Start, out.End
	tool := opt.Tool
	if tool == "" {
		tool = "estbench"
	}
	man.Tool = tool
	prov := results.Provenance{Suite: s.Name, SuiteSHA256: man.SuiteSHA256, Seed: s.Seed, Runs: s.Runs, Tool: tool + " " + man.Version, Date: out.End}
	files := []struct {
		name  string
		write func(path string) error
	}{
		{"summary.parquet", func(p string) error { return results.WriteSummaryParquet(p, rows) }},
		{"curves.parquet", func(p string) error { return WriteCurves(p, out) }},
		{"summary.md", func(p string) error { return results.WriteSummaryMD(p, rows, prov) }},
	}
	man.Files = []string{"runs.parquet"}
	for _, f := range files {
		if err := f.write(filepath.Join(dir, f.name)); err != nil {
			return nil, fmt.Errorf("%s: %w", f.name, err)
		}
		man.Files = append(man.Files, f.name)
	}
	man.Files = append(man.Files, "manifest.json")
	if err := results.WriteManifest(filepath.Join(dir, "manifest.json"), man); err != nil {
		return nil, fmt.Errorf("manifest.json: %w", err)
	}
	return &Result{Outcome: out, Rows: rows, Provenance: prov, Files: man.Files}, nil
}

// SummaryRows turns the pairs of an outcome into summary rows, in order.
func SummaryRows(out *bench.Outcome) []results.SummaryRow {
	rows := make([]results.SummaryRow, len(out.Pairs))
	for i, p := range out.Pairs {
		rows[i] = results.SummaryRow{Problem: p.Problem, Filter: p.Filter, Config: p.Config,
			Applicable: p.Applicable, Note: p.Note, Summary: p.Summary, AllocsPerStep: p.AllocsPerStep, EvalsPerStep: p.EvalsPerStep}
	}
	return rows
}

// WriteCurves writes the per-step curves of every pair of out to path.
func WriteCurves(path string, out *bench.Outcome) error {
	cw, err := results.NewCurvesWriter(path)
	if err != nil {
		return err
	}
	for _, p := range out.Pairs {
		for _, c := range p.Curves {
			if err := cw.Write(results.CurveRow{Problem: p.Problem, Filter: p.Filter, Config: p.Config, CurvePoint: c}); err != nil {
				cw.Abort()
				return err
			}
		}
	}
	return cw.Close()
}
