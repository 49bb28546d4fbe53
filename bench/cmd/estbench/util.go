package main

import (
	"errors"
	"flag"
	"io"
	"os"
	"runtime/debug"
	"strconv"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"

	"github.com/estbench/estbench/bench"
)

// usageExit maps a flag parsing error to an exit code: -h is a success.
func usageExit(err error) int {
	if errors.Is(err, flag.ErrHelp) {
		return exitOK
	}
	return exitUsage
}

func didYouMean(name string, valid []string) string {
	if s := bench.Suggest(name, valid); s != "" {
		return " (did you mean " + strconv.Quote(s) + "?)"
	}
	return ""
}

func parseSeed(s string) (uint64, error) {
	v, err := strconv.ParseUint(s, 10, 64)
	if err != nil {
		return 0, errors.New("want an unsigned integer, got " + strconv.Quote(s))
	}
	return v, nil
}

func toolVersion() string {
	bi, ok := debug.ReadBuildInfo()
	if !ok {
		return "(devel)"
	}
	v := bi.Main.Version
	for _, s := range bi.Settings {
		if s.Key == "vcs.revision" {
			v += " " + s.Value
		}
	}
	return v
}

// progress draws a bar on stderr when stderr is a terminal, nothing otherwise.
type progress struct {
	bar *progressbar.ProgressBar
}

func newProgress(w io.Writer, total int) *progress {
	f, ok := w.(*os.File)
	if !ok || !term.IsTerminal(int(f.Fd())) || total <= 0 {
		return &progress{}
	}
	return &progress{bar: progressbar.NewOptions(total,
		progressbar.OptionSetWriter(f),
		progressbar.OptionSetDescription("runs"),
		progressbar.OptionShowCount(),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionThrottle(100_000_000),
	)}
}

func (p *progress) set(done, total int) {
	if p.bar != nil {
		_ = p.bar.Set(done)
	}
}

func (p *progress) finish() {
	if p.bar != nil {
		_ = p.bar.Finish()
	}
}
