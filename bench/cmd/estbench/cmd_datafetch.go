package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"github.com/estbench/estbench/datasets/fetch"
)

const dataListUsage = `Usage: estbench data list [NAME...]

Lists the public datasets that 'estbench data fetch' can download: publisher,
licence (and where the licence statement comes from), landing page, and every
file with its size, archive kind and sha256. A file marked NOT VERIFIED has no
known sum: what arrives cannot be checked against the publisher's file.
`

const dataFetchUsage = `Usage: estbench data fetch NAME [--dir DIR] [--accept-unverified] [--mirror URL]

Downloads the files of a catalogue entry (see 'estbench data list') into DIR,
by default estbench/datasets/NAME under the user's cache folder. Each file is
checked against its size and sha256 before it is used; a mismatch moves it to
FILE.bad and fails. An interrupted download is resumed from FILE.part on the
next run. Archives are unpacked into a folder named after them, refusing
entries that would land outside it. A progress bar is drawn on stderr when it
is a terminal.

Flags:
`

func newDataFetchFlags(stderr io.Writer) (*flag.FlagSet, *string, *bool, *string) {
	fs := flag.NewFlagSet("data fetch", flag.ContinueOnError)
	fs.SetOutput(stderr)
	dir := fs.String("dir", "", "download into `DIR` (default: the user cache folder's estbench/datasets/NAME)")
	accept := fs.Bool("accept-unverified", false, "download files that have no known sha256 (their sums are printed, not checked)")
	mirror := fs.String("mirror", "", "fetch from `URL`/HOST/PATH instead of each file's publisher (a local mirror)")
	fs.Usage = func() {
		fmt.Fprint(stderr, dataFetchUsage)
		fs.PrintDefaults()
	}
	return fs, dir, accept, mirror
}

// dataList is 'estbench data list'.
func dataList(args []string, stdout, stderr io.Writer) int {
	return dataListWith(args, stdout, stderr, fetch.Catalogue())
}

func dataListWith(args []string, stdout, stderr io.Writer, cat []fetch.Dataset) int {
	fs := flag.NewFlagSet("data list", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() { fmt.Fprint(stderr, dataListUsage) }
	names, err := parseInterleaved(fs, args)
	if err != nil {
		return usageExit(err)
	}
	show := cat
	if len(names) > 0 {
		show = nil
		for _, n := range names {
			d, ok := findDataset(cat, n)
			if !ok {
				fmt.Fprintf(stderr, "estbench data list: unknown dataset %q%s\n", n, didYouMean(n, datasetNames(cat)))
				return exitUsage
			}
			show = append(show, d)
		}
	}
	writeDataList(stdout, show)
	return exitOK
}

func findDataset(cat []fetch.Dataset, name string) (fetch.Dataset, bool) {
	for _, d := range cat {
		if d.Name == name {
			return d, true
		}
	}
	return fetch.Dataset{}, false
}

func datasetNames(cat []fetch.Dataset) []string {
	names := make([]string, len(cat))
	for i, d := range cat {
		names[i] = d.Name
	}
	return names
}

func writeDataList(w io.Writer, cat []fetch.Dataset) {
	for i, d := range cat {
		if i > 0 {
			fmt.Fprintln(w)
		}
		fmt.Fprintf(w, "%s — %s\n", d.Name, d.Title)
		fmt.Fprintf(w, "  publisher  %s\n", d.Publisher)
		fmt.Fprintf(w, "  licence    %s\n", d.Licence)
		fmt.Fprintf(w, "             (%s)\n", d.LicenceSource)
		fmt.Fprintf(w, "  page       %s\n", d.Landing)
		if d.Note != "" {
			fmt.Fprintf(w, "  note       %s\n", d.Note)
		}
		total, known := d.Size()
		size := humanBytes(total)
		switch {
		case !known && total == 0:
			size = "size unknown"
		case !known:
			size += " known, the rest of unknown size"
		}
		state := "all verified by sha256"
		if n := len(d.UnverifiedFiles()); n > 0 {
			state = fmt.Sprintf("%d NOT VERIFIED (fetch needs --accept-unverified)", n)
		}
		fmt.Fprintf(w, "  files      %d, %s, %s\n", len(d.Files), size, state)
		width := 0
		for _, f := range d.Files {
			width = max(width, len(f.Name))
		}
		for _, f := range d.Files {
			size := "size unknown"
			if f.Size > 0 {
				size = humanBytes(f.Size)
			}
			sum := "sha256 " + f.SHA256
			if f.Unverified {
				sum = "NOT VERIFIED: no sha256 known"
			}
			kind := ""
			if f.Archive != fetch.NoArchive {
				kind = "  " + f.Archive.String() + ", unpacked"
			}
			fmt.Fprintf(w, "    %-*s  %12s  %s%s\n", width, f.Name, size, sum, kind)
			fmt.Fprintf(w, "        from   %s\n", f.URL)
			fmt.Fprintf(w, "        about  %s\n", f.Note)
		}
	}
}

// humanBytes prints a byte count with three significant digits in SI units.
func humanBytes(n int64) string {
	if n < 1000 {
		return fmt.Sprintf("%d B", n)
	}
	v := float64(n)
	for _, u := range []string{"kB", "MB", "GB", "TB"} {
		v /= 1000
		if v < 999.5 || u == "TB" {
			switch {
			case v < 9.995:
				return fmt.Sprintf("%.2f %s", v, u)
			case v < 99.95:
				return fmt.Sprintf("%.1f %s", v, u)
			}
			return fmt.Sprintf("%.0f %s", v, u)
		}
	}
	return fmt.Sprintf("%d B", n)
}

// dataFetch is 'estbench data fetch'.
func dataFetch(args []string, stdout, stderr io.Writer) int {
	return dataFetchWith(args, stdout, stderr, fetch.Catalogue(), fetch.Fetcher{})
}

// dataFetchWith runs the command against a catalogue and a fetcher's
// settings (tests give a local server's client and fast retries).
func dataFetchWith(args []string, stdout, stderr io.Writer, cat []fetch.Dataset, base fetch.Fetcher) int {
	fs, dir, accept, mirror := newDataFetchFlags(stderr)
	names, err := parseInterleaved(fs, args)
	if err != nil {
		return usageExit(err)
	}
	if len(names) != 1 {
		fmt.Fprintf(stderr, "estbench data fetch: want one dataset name, got %d\n\n", len(names))
		fs.Usage()
		return exitUsage
	}
	d, ok := findDataset(cat, names[0])
	if !ok {
		fmt.Fprintf(stderr, "estbench data fetch: unknown dataset %q%s; 'estbench data list' shows the catalogue\n",
			names[0], didYouMean(names[0], datasetNames(cat)))
		return exitUsage
	}
	if *dir == "" {
		if *dir, err = fetch.DefaultDir(d.Name); err != nil {
			fmt.Fprintf(stderr, "estbench data fetch: %v; give --dir\n", err)
			return exitUsage
		}
	}
	f := base
	f.AcceptUnverified = *accept
	if *mirror != "" {
		f.Mirror = *mirror
	}
	bars := newByteBars(stderr)
	if bars != nil {
		f.Progress = bars.update
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	res, err := f.Fetch(ctx, d, *dir)
	if bars != nil {
		bars.finish()
	}
	var ue *fetch.UnverifiedError
	if errors.As(err, &ue) {
		fmt.Fprintf(stderr, "estbench data fetch: %s: no sha256 is known for %s.\n"+
			"What arrives could not be checked against the publisher's files, so a changed, truncated or\n"+
			"tampered download would go unnoticed. Pass --accept-unverified to download anyway; the sums\n"+
			"of what arrives are printed so that you can compare them with the publisher's.\n",
			d.Name, strings.Join(ue.Files, ", "))
		return exitUsage
	}
	fmt.Fprintf(stdout, "%s -> %s\n", d.Name, res.Dir)
	writeFetchResult(stdout, res)
	if err != nil {
		fmt.Fprintf(stderr, "estbench data fetch: %v\n", err)
		return exitFailed
	}
	fmt.Fprintf(stdout, "licence: %s; keep it with the data\n", d.Licence)
	if n := len(d.UnverifiedFiles()); n > 0 {
		fmt.Fprintf(stderr, "estbench data fetch: warning: %d file(s) of %s could not be verified; their sums are printed above: compare them with the publisher's before relying on them\n", n, d.Name)
	}
	return exitOK
}

func writeFetchResult(w io.Writer, res fetch.Result) {
	width := 0
	for _, fr := range res.Files {
		width = max(width, len(fr.Name))
	}
	for _, fr := range res.Files {
		check := "verified"
		if !fr.Verified {
			check = "NOT VERIFIED, sha256 " + fr.SHA256
		}
		var how string
		switch {
		case fr.Reused:
			how = "already present"
		case fr.ResumedFrom > 0:
			how = "downloaded, resumed after " + humanBytes(fr.ResumedFrom)
		case fr.Restarted:
			how = "downloaded again from the start (the partial file could not be resumed)"
		default:
			how = "downloaded"
		}
		if fr.Quarantined != "" {
			how += "; an earlier copy with the wrong sum was moved to " + fr.Quarantined
		}
		fmt.Fprintf(w, "  %-*s  %9s  %s, %s\n", width, fr.Name, humanBytes(fr.Size), check, how)
		switch {
		case fr.ExtractReused:
			fmt.Fprintf(w, "  %-*s  %9s  unpacked earlier into %s\n", width, "", "", fr.Extracted)
		case fr.Extracted != "":
			fmt.Fprintf(w, "  %-*s  %9s  unpacked %d entries, %s, into %s\n", width, "", "", fr.Unpacked.Entries, humanBytes(fr.Unpacked.Bytes), fr.Extracted)
		}
	}
}

// byteBars draws one progress bar per file on a terminal.
type byteBars struct {
	out  *os.File
	name string
	bar  *progressbar.ProgressBar
}

// newByteBars returns nil unless w is a terminal.
func newByteBars(w io.Writer) *byteBars {
	f, ok := w.(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) {
		return nil
	}
	return &byteBars{out: f}
}

func (b *byteBars) update(name string, done, total int64) {
	if name != b.name || b.bar == nil {
		b.finish()
		b.name = name
		b.bar = progressbar.NewOptions64(total,
			progressbar.OptionSetWriter(b.out),
			progressbar.OptionSetDescription(name),
			progressbar.OptionShowBytes(true),
			progressbar.OptionSetPredictTime(true),
			progressbar.OptionClearOnFinish(),
			progressbar.OptionThrottle(100_000_000),
		)
	}
	_ = b.bar.Set64(done)
}

func (b *byteBars) finish() {
	if b.bar != nil {
		_ = b.bar.Finish()
		b.bar = nil
	}
}
