package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"text/tabwriter"

	"github.com/estbench/estbench/datasets/navlog"
	"github.com/estbench/estbench/datasets/recorded"
)

const dataUsage = `Usage:
  estbench data import --format F [flags] FILE... --out DIR
  estbench data show FILE...
  estbench data list [NAME...]
  estbench data fetch NAME [--dir DIR] [--accept-unverified] [--mirror URL]

import converts recorded sensor data into one .arrow file per sequence
(per track, per vessel) in DIR. F is one of:
  csv         delimited text described by a TOML mapping (--mapping FILE);
              FILE is the folder holding the mapped files, or the one file
  asl         the ASL layout of visual-inertial datasets; FILE is the
              sequence folder (or its mav0 folder)
  smartphone  a smartphone sensor trace (TYPE_ACCELEROMETER lines, ...)
  gpx         GPX tracks, one sequence per track segment
  nmea        an NMEA 0183 log: the receiver's track, and one sequence per
              vessel heard in its AIS sentences
  ais-csv     AIS reports in the MarineCadastre CSV layout, one sequence
              per vessel
Positions of gpx, nmea and ais-csv are kept as lat/lon and converted to
local east-north-up about each track's first point.

Any bad line or field stops the import with file:line: field: message and
nothing written (exit 2), unless --keep-going writes what could be read.

show prints a file's metadata, span, sensors and, per column, its samples,
mean rate and longest gap.

list shows the catalogue of public datasets; fetch downloads one into the
user cache folder (or --dir), resuming and verifying each file by sha256
('estbench data fetch -h').

Flags of import:
`

var dataFormats = []string{"csv", "asl", "smartphone", "gpx", "nmea", "ais-csv"}

func cmdData(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		fmt.Fprint(stderr, dataUsage)
		dataFlags(stderr).PrintDefaults()
		return exitUsage
	}
	switch args[0] {
	case "import":
		return cmdDataImport(args[1:], stdout, stderr)
	case "show":
		return cmdDataShow(args[1:], stdout, stderr)
	case "list":
		return dataList(args[1:], stdout, stderr)
	case "fetch":
		return dataFetch(args[1:], stdout, stderr)
	case "-h", "-help", "--help", "help":
		fmt.Fprint(stderr, dataUsage)
		dataFlags(stderr).PrintDefaults()
		return exitOK
	}
	fmt.Fprintf(stderr, "estbench data: unknown subcommand %q%s; want import, show, list or fetch\n", args[0], didYouMean(args[0], []string{"import", "show", "list", "fetch"}))
	return exitUsage
}

type importFlags struct {
	format, out, mapping     string
	dataset, licence, source string
	keepGoing                bool
}

func dataFlags(stderr io.Writer) *flag.FlagSet {
	fs, _ := newImportFlags(stderr)
	return fs
}

func newImportFlags(stderr io.Writer) (*flag.FlagSet, *importFlags) {
	f := &importFlags{}
	fs := flag.NewFlagSet("data import", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.StringVar(&f.format, "format", "", "input format `F`: "+strings.Join(dataFormats, ", "))
	fs.StringVar(&f.out, "out", "", "output `DIR` (created if needed)")
	fs.StringVar(&f.mapping, "mapping", "", "TOML mapping `FILE` (--format csv)")
	fs.StringVar(&f.dataset, "dataset", "", "dataset `NAME` recorded in the files (default: the mapping's, or the format)")
	fs.StringVar(&f.licence, "licence", "", "licence `TEXT` of the data, recorded in the files")
	fs.StringVar(&f.source, "source", "", "source `TEXT` (where the data came from), recorded in the files")
	fs.BoolVar(&f.keepGoing, "keep-going", false, "write what could be read despite bad lines, reporting them")
	fs.Usage = func() {
		fmt.Fprint(stderr, dataUsage)
		fs.PrintDefaults()
	}
	return fs, f
}

// parseInterleaved parses flags that may come before, between or after
// the positional arguments, which it returns.
func parseInterleaved(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			return nil, err
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		if args[0] == "--" {
			return append(pos, args[1:]...), nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

func cmdDataImport(args []string, stdout, stderr io.Writer) int {
	fs, f := newImportFlags(stderr)
	files, err := parseInterleaved(fs, args)
	if err != nil {
		return usageExit(err)
	}
	fail := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "estbench data import: "+format+"\n", a...)
		return exitUsage
	}
	switch {
	case f.format == "":
		return fail("--format is required (one of %s)", strings.Join(dataFormats, ", "))
	case !contains(dataFormats, f.format):
		return fail("unknown format %q%s; valid: %s", f.format, didYouMean(f.format, dataFormats), strings.Join(dataFormats, ", "))
	case f.out == "":
		return fail("--out DIR is required")
	case len(files) == 0:
		return fail("no input FILE given")
	case f.format == "csv" && f.mapping == "":
		return fail("--format csv needs --mapping FILE")
	case f.format != "csv" && f.mapping != "":
		return fail("--mapping is only for --format csv")
	}

	var mapping *recorded.Mapping
	if f.mapping != "" {
		data, err := os.ReadFile(f.mapping)
		if err != nil {
			return fail("%v", err)
		}
		if mapping, err = recorded.ParseMapping(f.mapping, data); err != nil {
			printErrors(stderr, err)
			return exitUsage
		}
	}
	var recs []*recorded.Recording
	var problems []error
	for _, file := range files {
		rs, errs := importFile(f.format, file, mapping)
		recs = append(recs, rs...)
		problems = append(problems, errs...)
	}
	if len(problems) > 0 {
		for _, e := range problems {
			printErrors(stderr, e)
		}
		if !f.keepGoing || len(recs) == 0 {
			fmt.Fprintln(stderr, "estbench data import: bad input; nothing written")
			return exitUsage
		}
	}
	if len(recs) == 0 {
		return fail("no sequences found in %s", strings.Join(files, ", "))
	}
	byName := make(map[string]*recorded.Recording)
	for _, r := range recs {
		if f.dataset != "" {
			r.Meta.Dataset = f.dataset
		}
		if f.licence != "" {
			r.Meta.Licence = f.licence
		}
		if f.source != "" {
			r.Meta.Source = f.source
		}
		name := recorded.FileName(r)
		if prev, dup := byName[name]; dup {
			return fail("two sequences would both be written to %s (%s and %s); import them into different folders", name, prev.Meta.Source, r.Meta.Source)
		}
		byName[name] = r
	}
	if err := os.MkdirAll(f.out, 0o755); err != nil {
		fmt.Fprintf(stderr, "estbench data import: %v\n", err)
		return exitFailed
	}
	// Write every file before renaming any, so that a failure leaves none.
	names := make([]string, 0, len(byName))
	for n := range byName {
		names = append(names, n)
	}
	sort.Strings(names)
	temps := make([]*recorded.TempFile, 0, len(names))
	abort := func(err error) int {
		for _, t := range temps {
			t.Abort()
		}
		fmt.Fprintf(stderr, "estbench data import: %v; nothing written\n", err)
		return exitFailed
	}
	for _, n := range names {
		t, err := recorded.CreateTemp(filepath.Join(f.out, n))
		if err != nil {
			return abort(err)
		}
		temps = append(temps, t)
		if err := t.Write(byName[n]); err != nil {
			return abort(err)
		}
	}
	for i, t := range temps {
		if err := t.Commit(); err != nil {
			for _, rest := range temps[i+1:] {
				rest.Abort()
			}
			fmt.Fprintf(stderr, "estbench data import: %v\n", err)
			return exitFailed
		}
		r := byName[names[i]]
		span := 0.0
		if r.Len() > 0 {
			span = r.T[r.Len()-1] - r.T[0]
		}
		fmt.Fprintf(stdout, "%s: %d rows, %d columns, %s s\n", filepath.Join(f.out, names[i]), r.Len(), len(r.Columns), num(span))
	}
	return exitOK
}

// importFile reads one input; it returns the recordings read and the
// problems found (row errors, issues, or a failure to read at all).
func importFile(format, file string, m *recorded.Mapping) ([]*recorded.Recording, []error) {
	one := func(r *recorded.Recording, err error) ([]*recorded.Recording, []error) {
		var errs []error
		if err != nil {
			errs = append(errs, err)
		}
		if r == nil {
			return nil, errs
		}
		return []*recorded.Recording{r}, errs
	}
	switch format {
	case "csv":
		return one(recorded.LoadCSV(m, file))
	case "asl":
		return one(recorded.LoadASL(file))
	case "smartphone":
		return one(recorded.LoadSmartphone(file))
	}
	fh, err := os.Open(file)
	if err != nil {
		return nil, []error{err}
	}
	defer fh.Close()
	var (
		tracks []navlog.Track
		issues []navlog.Issue
		nIssue int
		errs   []error
	)
	sensor := "gnss"
	firstAIS := -1 // index of the first track from AIS reports, in an NMEA log
	switch format {
	case "gpx":
		var r *navlog.GPXReader
		tracks, r = navlog.ReadGPXTracks(fh, file)
		issues, nIssue = r.Issues(), r.NumIssues()
		if err := r.Err(); err != nil {
			errs = append(errs, err)
		}
	case "nmea":
		tr, r := navlog.ReadNMEATrack(fh, file, navlog.NMEAConfig{})
		issues, nIssue = r.Issues(), r.NumIssues()
		if err := r.Err(); err != nil {
			errs = append(errs, err)
		}
		if len(tr.Points) > 0 {
			base := filepath.Base(file)
			tr.ID = strings.TrimSuffix(base, filepath.Ext(base))
			tracks = append(tracks, tr)
		}
		if _, err := fh.Seek(0, io.SeekStart); err != nil {
			return nil, append(errs, err)
		}
		ais, _, ar := navlog.ReadAISTracks(fh, file, navlog.TrackConfig{})
		issues, nIssue = append(issues, ar.Issues()...), nIssue+ar.NumIssues()
		if err := ar.Err(); err != nil {
			errs = append(errs, err)
		}
		tracks = append(tracks, ais...)
		firstAIS = len(tracks) - len(ais)
	case "ais-csv":
		var r *navlog.AISCSVReader
		tracks, _, r = navlog.ReadAISCSVTracks(fh, file, navlog.TrackConfig{})
		issues, nIssue = r.Issues(), r.NumIssues()
		if err := r.Err(); err != nil {
			errs = append(errs, err)
		}
		sensor = "ais"
	}
	for _, is := range issues {
		errs = append(errs, is)
	}
	if nIssue > len(issues) {
		errs = append(errs, fmt.Errorf("%s: %d more issues", file, nIssue-len(issues)))
	}
	var recs []*recorded.Recording
	for i, tr := range tracks {
		s := sensor
		if firstAIS >= 0 && i >= firstAIS {
			s = "ais"
		}
		r, err := recorded.FromTrack(tr, format, s)
		if err != nil {
			errs = append(errs, err)
			continue
		}
		recs = append(recs, r)
	}
	return recs, errs
}

// maxPrinted is the number of error lines printed for one input.
const maxPrinted = 20

func printErrors(w io.Writer, err error) {
	var list recorded.ErrorList
	if errors.As(err, &list) {
		for i, e := range list {
			if i == maxPrinted {
				fmt.Fprintf(w, "(and %d more)\n", len(list)-i)
				break
			}
			fmt.Fprintln(w, e)
		}
		return
	}
	fmt.Fprintln(w, err)
}

func cmdDataShow(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("data show", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprint(stderr, "Usage: estbench data show FILE...\n\nPrints the metadata, span, sensors and, per column, the samples, mean rate\nand longest gap of recordings written by estbench data import.\n")
	}
	files, err := parseInterleaved(fs, args)
	if err != nil {
		return usageExit(err)
	}
	if len(files) == 0 {
		fmt.Fprintln(stderr, "estbench data show: no FILE given")
		return exitUsage
	}
	for i, file := range files {
		m, err := recorded.Map(file)
		if err != nil {
			fmt.Fprintf(stderr, "estbench data show: %v\n", err)
			return exitUsage
		}
		if i > 0 {
			fmt.Fprintln(stdout)
		}
		size := int64(-1)
		if fi, err := os.Stat(file); err == nil {
			size = fi.Size()
		}
		writeShow(stdout, file, size, m.Recording)
		m.Close()
	}
	return exitOK
}

func writeShow(w io.Writer, file string, size int64, r *recorded.Recording) {
	m := &r.Meta
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "file\t%s (%d bytes)\n", file, size)
	fmt.Fprintf(tw, "dataset\t%s\n", orNone(m.Dataset))
	fmt.Fprintf(tw, "sequence\t%s\n", orNone(m.Sequence))
	fmt.Fprintf(tw, "licence\t%s\n", orNone(m.Licence))
	fmt.Fprintf(tw, "source\t%s\n", orNone(strings.ReplaceAll(m.Source, "\n", " ")))
	if m.Start.IsZero() {
		fmt.Fprintf(tw, "start\tunknown (t counts from the source's own zero)\n")
	} else {
		fmt.Fprintf(tw, "start\t%s (t = 0)\n", m.Start.Format("2006-01-02T15:04:05.999999999Z07:00"))
	}
	fmt.Fprintf(tw, "rows\t%d\n", r.Len())
	if r.Len() > 0 {
		t0, t1 := r.T[0], r.T[r.Len()-1]
		fmt.Fprintf(tw, "span\t%s .. %s s (%s s)\n", num(t0), num(t1), num(t1-t0))
	}
	if len(m.Skipped) > 0 {
		kinds := make([]string, 0, len(m.Skipped))
		for k := range m.Skipped {
			kinds = append(kinds, k)
		}
		sort.Strings(kinds)
		for i, k := range kinds {
			kinds[i] = fmt.Sprintf("%s %d", k, m.Skipped[k])
		}
		fmt.Fprintf(tw, "skipped\t%s\n", strings.Join(kinds, ", "))
	}
	tw.Flush()
	if len(m.Sensors) > 0 {
		fmt.Fprintln(w, "\nsensors")
		tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  name\tsamples\tmean rate\tcolumns")
		for _, s := range m.Sensors {
			fmt.Fprintf(tw, "  %s\t%d\t%s Hz\t%s\n", s.Name, s.Samples, num(s.RateHz), strings.Join(s.Columns, " "))
		}
		tw.Flush()
	}
	fmt.Fprintln(w, "\ncolumns")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  name\tunit\tframe\trole\tsamples\tmean rate\tlongest gap")
	for i, st := range r.Stats() {
		c := &r.Columns[i]
		gap := "-"
		if st.Samples >= 2 {
			gap = fmt.Sprintf("%s s from t = %s s", num(st.LongestGap), num(st.GapStart))
		}
		rate := "-"
		if st.Samples >= 2 {
			rate = num(st.MeanRate) + " Hz"
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%d\t%s\t%s\n", c.Name, c.Unit, c.Frame, c.Role, st.Samples, rate, gap)
	}
	tw.Flush()
}

// num formats a number with six significant digits.
func num(v float64) string { return fmt.Sprintf("%.6g", v) }

func orNone(s string) string {
	if s == "" {
		return "(none)"
	}
	return s
}

func contains(list []string, s string) bool {
	for _, v := range list {
		if v == s {
			return true
		}
	}
	return false
}
