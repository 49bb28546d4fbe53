package results

import (
	"bytes"
	"context"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// chromiumPath finds Debian's chromium. The test skips without it, except
// under CI (CI=true), where .ci/run installs it and its absence is a
// failure.
func chromiumPath(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("chromium is not installed (.ci/run installs Debian's chromium package)")
	}
	t.Skip("chromium is not installed; apt-get install -y --no-install-recommends chromium to run this test")
	return ""
}

// chromium runs headless Chromium on a file with the given extra
// arguments and returns its stdout and stderr.
func chromium(t *testing.T, bin, page string, args ...string) (stdout, stderr string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	base := []string{
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + t.TempDir(), "--enable-logging=stderr", "--v=0",
	}
	cmd := exec.CommandContext(ctx, bin, append(append(base, args...), "file://"+page)...)
	var o, e bytes.Buffer
	cmd.Stdout, cmd.Stderr = &o, &e
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, e.String())
	}
	return o.String(), e.String()
}

// consoleProblems are the lines of Chromium's log that report a script
// error, a console error or a resource the page tried to load and could
// not.
func consoleProblems(log string) []string {
	var out []string
	for _, l := range strings.Split(log, "\n") {
		if strings.Contains(l, "Uncaught") || strings.Contains(l, "ERROR:CONSOLE") ||
			strings.Contains(l, "Failed to load resource") || strings.Contains(l, "net::ERR_") {
			out = append(out, l)
		}
	}
	return out
}

// The report opens from disk in a real browser: the rendered DOM holds the
// plots and the table, nothing fails to load, and the screenshot shows
// drawn plots in the series colours. Chromium's log goes to stderr
// (--enable-logging=stderr), where console messages and failed loads
// appear.
func TestReportInBrowser(t *testing.T) {
	bin := chromiumPath(t)
	page, figs := writeFixtureReport(t)
	page, err := filepath.Abs(page)
	if err != nil {
		t.Fatal(err)
	}

	// One run prints the rendered DOM and takes the screenshot.
	shot := filepath.Join(t.TempDir(), "report.png")
	dom, log := chromium(t, bin, page, "--dump-dom", "--screenshot="+shot, "--window-size=1280,2000", "--hide-scrollbars")
	if p := consoleProblems(log); len(p) > 0 {
		t.Errorf("console errors while loading the page:\n%s", strings.Join(p, "\n"))
	}
	if n := strings.Count(dom, "<svg "); n != len(figs) {
		t.Errorf("rendered DOM has %d <svg> elements, want %d", n, len(figs))
	}
	d := reportFixture()
	if n := strings.Count(dom, "<tr"); n != len(d.Rows)+1 {
		t.Errorf("rendered DOM has %d table rows, want %d and the heading", n, len(d.Rows))
	}
	for _, want := range []string{`<dl class="manifest">`, d.Manifest.SuiteSHA256, "RMSE over time", "average NEES over time", "accuracy and cost"} {
		if !strings.Contains(dom, want) {
			t.Errorf("rendered DOM lacks %q", want)
		}
	}

	f, err := os.Open(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v", err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatal(err)
	}
	b := img.Bounds()
	if b.Dx() != 1280 || b.Dy() != 2000 {
		t.Errorf("screenshot is %dx%d, want 1280x2000", b.Dx(), b.Dy())
	}
	inked := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if r>>8 < 235 || g>>8 < 235 || bl>>8 < 235 {
				inked++
			}
		}
	}
	// Text, table rules and plots cover several percent of a page; a blank
	// or unstyled-error page is almost all white.
	if frac := float64(inked) / float64(b.Dx()*b.Dy()); frac < 0.03 {
		t.Errorf("screenshot is %.1f%% non-white: the page did not render", 100*frac)
	}
	// The first two configurations' colours are in the plots of the first
	// problem, which are within the first 2000 pixels of the page.
	for _, c := range seriesColours[:2] {
		if n := countNearColour(img, c, 12); n < 200 {
			t.Errorf("screenshot has %d pixels of the series colour #%02x%02x%02x: plots not drawn", n, c.R, c.G, c.B)
		}
	}
}
