package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// runTiny runs the tiny suite into a fresh folder and returns it.
func runTiny(t *testing.T) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "out")
	if code, _, e := runCLI(t, "run", "--suite", writeSuite(t, tinySuite), "--out", dir, "--workers", "2"); code != exitOK {
		t.Fatalf("run: exit %d: %s", code, e)
	}
	return dir
}

// The HTML report of a real run: the page in DIR, one SVG and one PNG per
// figure in DIR/plots, every figure inline in the page, no URL to the
// network, nothing on stdout.
func TestReportHTMLFromRun(t *testing.T) {
	dir := runTiny(t)
	code, out, errOut := runCLI(t, "report", dir)
	if code != exitOK || out != "" {
		t.Fatalf("exit %d, stdout %q, stderr %s", code, out, errOut)
	}
	page, err := os.ReadFile(filepath.Join(dir, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	// Two problems (cv2d, ungm), each with RMSE, NEES and cost figures.
	names := []string{"cv2d-steps-15-rmse", "cv2d-steps-15-nees", "cv2d-steps-15-cost", "ungm-steps-15-rmse", "ungm-steps-15-nees", "ungm-steps-15-cost"}
	for _, n := range names {
		for _, ext := range []string{".svg", ".png"} {
			if st, err := os.Stat(filepath.Join(dir, "plots", n+ext)); err != nil || st.Size() == 0 {
				t.Errorf("plots/%s%s missing or empty: %v", n, ext, err)
			}
		}
		if !strings.Contains(string(page), `id="fig-`+n+`"`) {
			t.Errorf("the page has no figure %s", n)
		}
	}
	if got := strings.Count(string(page), "<svg "); got != len(names) {
		t.Errorf("%d inline <svg>, want %d", got, len(names))
	}
	if strings.Contains(string(page), "http://") || strings.Contains(string(page), "https://") {
		t.Error("the page names an http(s) URL")
	}
	if got := strings.Count(string(page), "<tr"); got != 1+6 {
		t.Errorf("%d table rows, want the heading and 6 pairs", got)
	}

	// --out elsewhere: the page there, the plots beside it.
	other := filepath.Join(t.TempDir(), "site", "harbour.html")
	if err := os.MkdirAll(filepath.Dir(other), 0o755); err != nil {
		t.Fatal(err)
	}
	if code, _, e := runCLI(t, "report", "--out", other, dir); code != exitOK {
		t.Fatalf("--out before DIR: exit %d: %s", code, e)
	}
	if _, err := os.Stat(filepath.Join(filepath.Dir(other), "plots", names[0]+".svg")); err != nil {
		t.Errorf("plots not beside --out: %v", err)
	}
}

// The citable tables go to stdout or to --out, with the provenance.
func TestReportTables(t *testing.T) {
	dir := runTiny(t)
	code, tex, e := runCLI(t, "report", dir, "--format", "latex")
	if code != exitOK {
		t.Fatalf("latex: exit %d: %s", code, e)
	}
	for _, want := range []string{`\toprule`, `\bottomrule`, `\label{tab:estbench-shore-radar-launch}`, "Provenance: suite shore-radar-launch, seed 5, 4 runs", "suite sha256 "} {
		if !strings.Contains(tex, want) {
			t.Errorf("latex lacks %q", want)
		}
	}
	path := filepath.Join(t.TempDir(), "table.md")
	if code, out, e := runCLI(t, "report", dir, "--format", "markdown", "--out", path); code != exitOK || out != "" {
		t.Fatalf("markdown --out: exit %d, stdout %q: %s", code, out, e)
	}
	md, err := os.ReadFile(path)
	if err != nil || !strings.Contains(string(md), "| problem | filter |") || !strings.Contains(string(md), "Provenance: suite shore-radar-launch") {
		t.Errorf("markdown file: %v\n%s", err, md)
	}
	if _, err := os.Stat(filepath.Join(dir, "report.html")); !os.IsNotExist(err) {
		t.Error("a table format wrote report.html")
	}
}

// Bad usage and bad input are exit 2 and write nothing.
func TestReportBadInput(t *testing.T) {
	dir := runTiny(t)
	if code, _, e := runCLI(t, "report"); code != exitUsage || !strings.Contains(e, "missing the result folder") {
		t.Errorf("no DIR: exit %d, %q", code, e)
	}
	if code, _, e := runCLI(t, "report", dir, "--format", "htm"); code != exitUsage || !strings.Contains(e, `did you mean "html"`) {
		t.Errorf("unknown format: exit %d, %q", code, e)
	}
	if code, _, _ := runCLI(t, "report", dir, "extra"); code != exitUsage {
		t.Errorf("two folders: exit %d", code)
	}
	if code, _, e := runCLI(t, "report", filepath.Join(dir, "nonexistent")); code != exitUsage || e == "" {
		t.Errorf("missing folder: exit %d", code)
	}
	if err := os.Remove(filepath.Join(dir, "curves.parquet")); err != nil {
		t.Fatal(err)
	}
	if code, _, e := runCLI(t, "report", dir); code != exitUsage || !strings.Contains(e, "curves.parquet") {
		t.Errorf("folder without curves.parquet: exit %d, %q", code, e)
	}
	if _, err := os.Stat(filepath.Join(dir, "report.html")); !os.IsNotExist(err) {
		t.Error("report.html written for bad input")
	}
	if code, out, _ := runCLI(t, "report", "-h"); code != exitOK {
		t.Errorf("-h: exit %d %q", code, out)
	}
}
