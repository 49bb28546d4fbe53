package main

import (
	"encoding/json"
	"maps"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/bench/cli"
	"github.com/estbench/estbench/filters"
	"github.com/estbench/estbench/metrics"
	"github.com/estbench/estbench/results"
)

// defaultLike is the default suite's problems and filters, cut to a few
// runs and steps so that the tests stay fast.
const defaultLike = `
name = "harbour-radar-nightly"
seed = 1
runs = 12
[[problem]]
use = "cv2d"
steps = 20
[[problem]]
use = "ungm"
steps = 20
[[problem]]
use = "ctrb"
steps = 20
[[filter]]
use = "kf"
[[filter]]
use = "ekf"
[[filter]]
use = "ukf"
[[filter]]
use = "pf"
particles = [300]
`

// runTo runs the suite text with the catalogue into dir, writing the files
// compare reads as 'estbench run' does: runs.parquet as the runs finish,
// summary.parquet and manifest.json.
func runTo(t *testing.T, dir, text string, seed uint64, cat *bench.Catalogue) {
	t.Helper()
	s, err := bench.ParseSuite("suite.toml", []byte(text), cat)
	if err != nil {
		t.Fatal(err)
	}
	s.Seed = seed
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	rw, err := results.NewRunsWriter(filepath.Join(dir, "runs.parquet"))
	if err != nil {
		t.Fatal(err)
	}
	out, err := bench.Run(s, bench.Options{Workers: 2, OnRun: func(p *bench.Pair, st metrics.RunStat) {
		if err := rw.Write(results.RunRow{Problem: p.Problem, Filter: p.Filter, Config: p.Config, RunStat: st}); err != nil {
			t.Error(err)
		}
	}})
	if err != nil {
		t.Fatal(err)
	}
	if err := rw.Close(); err != nil {
		t.Fatal(err)
	}
	if err := results.WriteSummaryParquet(filepath.Join(dir, "summary.parquet"), cli.SummaryRows(out)); err != nil {
		t.Fatal(err)
	}
	man := results.CollectEnvironment()
	man.Suite, man.SuiteSHA256, man.Seed, man.Runs = s.Name, s.Hash(), s.Seed, s.Runs
	if err := results.WriteManifest(filepath.Join(dir, "manifest.json"), man); err != nil {
		t.Fatal(err)
	}
}

// worsened is the built-in catalogue with a pf that quietly uses a tenth
// of the particles it is given: a regression of the filter code under the
// same name and configuration, so the suite and its hash do not change.
func worsened() *bench.Catalogue {
	cat := bench.Builtin()
	for i := range cat.Filters {
		if f := &cat.Filters[i]; f.Name == "pf" {
			orig := f.New
			f.New = func(m *filters.Model, v bench.Values) (filters.Filter, error) {
				w := maps.Clone(v)
				w["particles"] = bench.Value{Num: math.Max(1, math.Round(v.Float("particles")/10))}
				return orig(m, w)
			}
		}
	}
	return cat
}

func compareJSON(t *testing.T, args ...string) (int, []map[string]any, string) {
	t.Helper()
	code, out, errOut := runCLI(t, append([]string{"compare", "--format", "json"}, args...)...)
	var rows []map[string]any
	if code != exitUsage {
		if err := json.Unmarshal([]byte(out), &rows); err != nil {
			t.Fatalf("stdout is not a JSON array: %v\n%s", err, out)
		}
	}
	return code, rows, errOut
}

// Two runs of the same suite and seed are bit-identical but for the
// timings: every row is same, with a change of exactly zero, and exit 0.
func TestCompareIdenticalRuns(t *testing.T) {
	tmp := t.TempDir()
	suite := writeSuite(t, tinySuite)
	for _, d := range []string{"a", "b"} {
		if code, _, e := runCLI(t, "run", "--suite", suite, "--out", filepath.Join(tmp, d), "--format", "csv"); code != exitOK {
			t.Fatalf("run: exit %d: %s", code, e)
		}
	}
	code, rows, errOut := compareJSON(t, filepath.Join(tmp, "a"), filepath.Join(tmp, "b"))
	if code != exitOK || len(rows) != 6 {
		t.Fatalf("exit %d, %d rows: %s", code, len(rows), errOut)
	}
	for _, r := range rows {
		if r["verdict"] != "same" || r["paired"] != true {
			t.Errorf("%v %v %v: %v, paired %v; want same, paired", r["problem"], r["filter"], r["config"], r["verdict"], r["paired"])
		}
		if r["base_runs"].(float64) > 0 && (r["rmse_change"] != 0.0 || r["rmse_change_lo"] != 0.0 || r["anees_change_hi"] != 0.0) {
			t.Errorf("%v %v: changes %v [%v, ..], want exactly 0", r["problem"], r["filter"], r["rmse_change"], r["rmse_change_lo"])
		}
	}
	// The table says so too, with the flags after the folders.
	code, out, _ := runCLI(t, "compare", filepath.Join(tmp, "a"), filepath.Join(tmp, "b"), "--format", "markdown", "--tolerance", "1%")
	if code != exitOK || !strings.Contains(out, "0 worse, 0 better, 6 same, 0 new, 0 gone") || !strings.Contains(out, "tolerance ±1%") {
		t.Errorf("exit %d, markdown:\n%s", code, out)
	}
}

// Runs that differ only in seed are refused, and compared unpaired with
// --allow-mismatch: chance differences are not flagged as worse. Each
// row's intervals are at 95%, so on a much larger suite a chance "worse"
// row is to be expected now and then (about 2.5% of rows per rule); this
// suite and these seeds are fixed, so the check is deterministic.
func TestCompareSeedsUnpaired(t *testing.T) {
	tmp := t.TempDir()
	runTo(t, filepath.Join(tmp, "s1"), defaultLike, 1, bench.Builtin())
	runTo(t, filepath.Join(tmp, "s2"), defaultLike, 2, bench.Builtin())
	code, _, errOut := runCLI(t, "compare", filepath.Join(tmp, "s1"), filepath.Join(tmp, "s2"))
	if code != exitUsage || !strings.Contains(errOut, "different suites or seeds") || !strings.Contains(errOut, "--allow-mismatch") {
		t.Fatalf("mismatch: exit %d, %q", code, errOut)
	}
	code, rows, errOut := compareJSON(t, "--allow-mismatch", filepath.Join(tmp, "s1"), filepath.Join(tmp, "s2"))
	if code != exitOK {
		t.Errorf("exit %d: %s", code, errOut)
	}
	compared := 0
	for _, r := range rows {
		if r["verdict"] == "worse" || r["paired"] != false {
			t.Errorf("%v %v: %v (%v), paired %v; want not worse, unpaired", r["problem"], r["filter"], r["verdict"], r["why"], r["paired"])
		}
		if r["rmse_change_lo"] != nil {
			compared++
		}
	}
	if compared != 10 { // 3 problems x 4 filters, less kf on ungm and ctrb
		t.Errorf("%d rows with an interval, want 10", compared)
	}
	_, out, _ := runCLI(t, "compare", "--allow-mismatch", filepath.Join(tmp, "s1"), filepath.Join(tmp, "s2"))
	if !strings.Contains(out, "UNPAIRED: the seeds differ (1, 2)") || !strings.Contains(out, "changed: suite sha256: ") {
		t.Errorf("table does not say it is unpaired:\n%s", out)
	}
}

// A pf that uses a tenth of its particles under the same name and config
// is worse where particles matter, and the gate exits 1; the other filters
// are untouched and the same. The RMSE of a particle filter grows as the
// particles shrink (its Monte Carlo error is O(1/√N): Crisan & Doucet
// 2002, IEEE Trans. Signal Process. 50(3), Theorem 1).
func TestCompareWorsenedFilter(t *testing.T) {
	tmp := t.TempDir()
	runTo(t, filepath.Join(tmp, "base"), defaultLike, 1, bench.Builtin())
	runTo(t, filepath.Join(tmp, "new"), defaultLike, 1, worsened())
	code, rows, errOut := compareJSON(t, filepath.Join(tmp, "base"), filepath.Join(tmp, "new"))
	if code != exitFailed {
		t.Errorf("exit %d, want %d: %s", code, exitFailed, errOut)
	}
	worse := 0
	for _, r := range rows {
		switch {
		case r["filter"] == "pf" && r["verdict"] == "worse":
			worse++
			if r["rmse_change_lo"].(float64) <= 0 {
				t.Errorf("%v pf: worse, but rmse change %v [%v, %v]", r["problem"], r["rmse_change"], r["rmse_change_lo"], r["rmse_change_hi"])
			}
		case r["filter"] != "pf" && r["verdict"] != "same":
			t.Errorf("%v %v: %v (%v), want same", r["problem"], r["filter"], r["verdict"], r["why"])
		}
	}
	if worse != 3 {
		t.Errorf("%d pf rows worse, want all 3:\n%v", worse, rows)
	}
}

func TestCompareBadInput(t *testing.T) {
	tmp := t.TempDir()
	good := filepath.Join(tmp, "good")
	runTo(t, good, tinySuite, 5, bench.Builtin())
	broken := filepath.Join(tmp, "broken")
	if err := os.MkdirAll(broken, 0o755); err != nil {
		t.Fatal(err)
	}
	for _, f := range []string{"manifest.json", "runs.parquet"} {
		b, _ := os.ReadFile(filepath.Join(good, f))
		os.WriteFile(filepath.Join(broken, f), b, 0o644)
	}
	os.WriteFile(filepath.Join(broken, "summary.parquet"), []byte("PAR1 truncated"), 0o644)
	for _, c := range []struct {
		args []string
		want string
	}{
		{[]string{good}, "want BASE_DIR and NEW_DIR"},
		{[]string{good, filepath.Join(tmp, "absent")}, "absent"},
		{[]string{good, broken}, filepath.Join(broken, "summary.parquet")},
		{[]string{good, good, "--format", "yaml"}, `unknown format "yaml"`},
		{[]string{good, good, "--tolerance", "x"}, "want a fraction"},
		{[]string{good, good, "--tolerance", "0"}, "must be positive"},
		{[]string{good, good, "--level", "95"}, "--level must be between 0 and 1"},
	} {
		code, _, errOut := runCLI(t, append([]string{"compare"}, c.args...)...)
		if code != exitUsage || !strings.Contains(errOut, c.want) {
			t.Errorf("%v: exit %d, %q; want %d naming %q", c.args, code, errOut, exitUsage, c.want)
		}
	}
	if code, _, _ := runCLI(t, "compare", "-h"); code != exitOK {
		t.Errorf("-h: exit %d", code)
	}
}

func TestFractionFlag(t *testing.T) {
	for _, c := range []struct {
		in   string
		want float64
	}{{"0.02", 0.02}, {"2%", 0.02}, {" 25% ", 0.25}, {"1e-9", 1e-9}} {
		var f fraction
		if err := f.Set(c.in); err != nil || math.Abs(float64(f)-c.want) > 1e-15 {
			t.Errorf("%q: %v %v, want %v", c.in, float64(f), err, c.want)
		}
	}
}
