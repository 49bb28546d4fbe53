package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/estbench/estbench/results"
)

func runCLI(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = dispatch(args, &o, &e)
	return code, o.String(), e.String()
}

const tinySuite = `
name = "shore-radar-launch"
seed = 5
runs = 4
[[problem]]
use = "cv2d"
steps = 15
[[problem]]
use = "ungm"
steps = 15
[[filter]]
use = "kf"
[[filter]]
use = "pf"
particles = [100, 200]
`

func writeSuite(t *testing.T, text string) string {
	t.Helper()
	p := filepath.Join(t.TempDir(), "suite.toml")
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestHelpOnEveryCommand(t *testing.T) {
	for _, cmd := range [][]string{{"run", "-h"}, {"list", "-h"}, {"help"}, {"help", "run"}} {
		code, out, errOut := runCLI(t, cmd...)
		if code != exitOK || out+errOut == "" {
			t.Errorf("%v: exit %d, no help text", cmd, code)
		}
	}
	if code, _, e := runCLI(t); code != exitUsage || !strings.Contains(e, "Usage") {
		t.Errorf("no command: exit %d", code)
	}
	if code, _, e := runCLI(t, "lst"); code != exitUsage || !strings.Contains(e, `did you mean "list"`) {
		t.Errorf("unknown command: exit %d, %q", code, e)
	}
}

// The JSON summary has exactly the documented columns, in order, and a pair
// that does not apply has runs 0, null metrics and the reason as its note.
func TestRunJSONAndFiles(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	code, out, errOut := runCLI(t, "run", "--suite", writeSuite(t, tinySuite), "--out", dir, "--format", "json", "--workers", "2")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rows []map[string]any
	if err := json.Unmarshal([]byte(out), &rows); err != nil {
		t.Fatalf("stdout is not a JSON array: %v\n%s", err, out)
	}
	if len(rows) != 6 {
		t.Fatalf("%d rows, want 2 problems x 3 configurations", len(rows))
	}
	dec := json.NewDecoder(strings.NewReader(out))
	dec.Token() // [
	dec.Token() // {
	var keys []string
	for dec.More() {
		k, _ := dec.Token()
		keys = append(keys, k.(string))
		var v any
		dec.Decode(&v)
	}
	if strings.Join(keys, ",") != strings.Join(results.SummaryColumns, ",") {
		t.Fatalf("columns %v, want %v", keys, results.SummaryColumns)
	}
	var na map[string]any
	for _, r := range rows {
		if r["problem"] == "ungm(steps=15)" && r["filter"] == "kf" {
			na = r
		}
	}
	if na == nil || na["runs"].(float64) != 0 || na["rmse"] != nil || na["anees"] != nil ||
		na["note"] != "kf needs a linear model; ungm(steps=15) is nonlinear" {
		t.Fatalf("not-applicable row: %v", na)
	}
	for _, f := range []string{"summary.parquet", "runs.parquet", "curves.parquet", "summary.md", "manifest.json"} {
		if st, err := os.Stat(filepath.Join(dir, f)); err != nil || st.Size() == 0 {
			t.Errorf("%s missing or empty: %v", f, err)
		}
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 5 {
		t.Errorf("out dir holds %d entries, want exactly the 5 result files (no temporaries)", len(entries))
	}
	runs, err := results.ReadRunsParquet(filepath.Join(dir, "runs.parquet"))
	if err != nil || len(runs) != 2*3*4-4 { // kf on ungm has no runs
		t.Fatalf("runs.parquet: %d rows, err %v", len(runs), err)
	}
	man, err := results.ReadManifest(filepath.Join(dir, "manifest.json"))
	if err != nil || man.Seed != 5 || man.Runs != 4 || len(man.SuiteSHA256) != 64 {
		t.Fatalf("manifest: %+v %v", man, err)
	}
}

// Bad input is exit 2 with the file, line and key, and nothing is written.
func TestRunBadSuiteWritesNothing(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "out")
	bad := strings.Replace(tinySuite, "particles = [100, 200]", "particels = [100, 200]", 1)
	code, out, errOut := runCLI(t, "run", "--suite", writeSuite(t, bad), "--out", dir)
	if code != exitUsage {
		t.Fatalf("exit %d, want %d", code, exitUsage)
	}
	if !strings.Contains(errOut, "suite.toml:15:") || !strings.Contains(errOut, `did you mean "particles"?`) || out != "" {
		t.Fatalf("stderr %q stdout %q", errOut, out)
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Fatalf("output directory created for a bad suite")
	}
	for _, args := range [][]string{{"run", "--runs", "-3"}, {"run", "--seed", "x"}, {"run", "--format", "yaml"}, {"run", "--suite", "/nonexistent.toml"}, {"run", "extra"}} {
		if code, _, _ := runCLI(t, append(args, "--out", dir)...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
	if _, err := os.Stat(dir); !os.IsNotExist(err) {
		t.Fatalf("output directory created for bad usage")
	}
}

func TestListShowsEveryEntry(t *testing.T) {
	code, out, _ := runCLI(t, "list")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	for _, name := range []string{"cv2d", "ungm", "ctrb", "kf", "ekf", "ukf", "pf", "particles", "source:", "traits:"} {
		if !strings.Contains(out, name) {
			t.Errorf("list output lacks %q", name)
		}
	}
}

// Every output format writes the same rows; CSV has the documented header.
func TestRunFormats(t *testing.T) {
	suite := writeSuite(t, tinySuite)
	for _, f := range results.Formats {
		code, out, errOut := runCLI(t, "run", "--suite", suite, "--runs", "2", "--out", filepath.Join(t.TempDir(), f), "--format", f)
		if code != exitOK || out == "" {
			t.Fatalf("%s: exit %d %s", f, code, errOut)
		}
		if f == "csv" && !strings.HasPrefix(out, strings.Join(results.SummaryColumns, ",")+"\n") {
			t.Errorf("csv header: %q", strings.SplitN(out, "\n", 2)[0])
		}
	}
}
