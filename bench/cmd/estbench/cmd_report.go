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

const reportUsage = `Usage: estbench report DIR [--out FILE] [--format html|latex|markdown]

Writes a report of the result folder DIR (made by estbench run) from its
summary.parquet, curves.parquet and manifest.json.

  html      (default) one self-contained page, DIR/report.html unless --out
            names another file: the summary table with its marks and notes,
            per problem RMSE and average NEES over time and the accuracy/cost
            scatter, and the manifest. The figures are also written as SVG
            and PNG files into plots/ beside the page.
  latex     a booktabs table with intervals, bounds and a provenance footnote,
            on stdout unless --out names a file.
  markdown  the same table in Markdown.

Flags:
`

// reportFormats are the formats of the report command.
var reportFormats = append([]string{"html"}, results.ReportTableFormats...)

func cmdReport(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("report", flag.ContinueOnError)
	fs.SetOutput(stderr)
	out := fs.String("out", "", "output `FILE` (html: default DIR/report.html; latex, markdown: default stdout)")
	format := fs.String("format", "html", "report format: "+strings.Join(reportFormats, ", "))
	fs.Usage = func() {
		fmt.Fprint(stderr, reportUsage)
		fs.PrintDefaults()
	}
	// DIR may come before or after the flags.
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return usageExit(err)
		}
		if fs.NArg() == 0 {
			break
		}
		pos = append(pos, fs.Arg(0))
		args = fs.Args()[1:]
	}
	switch {
	case len(pos) == 0:
		fmt.Fprintln(stderr, "estbench report: missing the result folder DIR")
		fs.Usage()
		return exitUsage
	case len(pos) > 1:
		fmt.Fprintf(stderr, "estbench report: unexpected argument %q\n", pos[1])
		return exitUsage
	}
	if !slices.Contains(reportFormats, *format) {
		fmt.Fprintf(stderr, "estbench report: unknown format %q%s; valid: %s\n", *format, didYouMean(*format, reportFormats), strings.Join(reportFormats, ", "))
		return exitUsage
	}
	dir := pos[0]
	d, err := results.ReadReportData(dir)
	if err != nil {
		fmt.Fprintf(stderr, "estbench report: %v\n", err)
		return exitUsage
	}

	if *format != "html" {
		if *out == "" {
			if err := results.WriteReportTable(stdout, *format, d); err != nil {
				fmt.Fprintf(stderr, "estbench report: %v\n", err)
				return exitFailed
			}
			return exitOK
		}
		err := results.WriteFileAtomic(*out, func(w io.Writer) error { return results.WriteReportTable(w, *format, d) })
		if err != nil {
			fmt.Fprintf(stderr, "estbench report: %v\n", err)
			return exitFailed
		}
		fmt.Fprintf(stderr, "estbench: report in %s\n", *out)
		return exitOK
	}

	path := *out
	if path == "" {
		path = filepath.Join(dir, "report.html")
	}
	figs, err := results.ReportFigures(d)
	if err != nil {
		fmt.Fprintf(stderr, "estbench report: %v\n", err)
		return exitFailed
	}
	plotDir := filepath.Join(filepath.Dir(path), "plots")
	if _, err := results.WritePlotFiles(plotDir, figs); err != nil {
		fmt.Fprintf(stderr, "estbench report: %v\n", err)
		return exitFailed
	}
	if err := results.WriteReportHTMLFile(path, d, figs, "plots"); err != nil {
		fmt.Fprintf(stderr, "estbench report: %v\n", err)
		return exitFailed
	}
	fmt.Fprintf(stderr, "estbench: report in %s (figures in %s)\n", path, plotDir)
	return exitOK
}
