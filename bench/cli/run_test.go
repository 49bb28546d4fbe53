package cli

import (
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/estbench/estbench/bench"
	"github.com/estbench/estbench/results"
)

const tinySuite = `
name = "shore-radar-tiny"
seed = 9
runs = 3
[[problem]]
use = "cv2d"
steps = 12
[[filter]]
use = "kf"
[[filter]]
use = "pf"
particles = 100
`

// WriteRun writes the folder estbench run writes, which the readers of
// estbench compare and report take back: the same rows, the manifest of
// the suite, one runs row per pair and run.
func TestWriteRunFolder(t *testing.T) {
	s, err := bench.ParseSuite("tiny.toml", []byte(tinySuite), bench.Builtin())
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	res, err := WriteRun(s, dir, RunOptions{Workers: 2, Command: []string{"tiny", "run"}, Tool: "tiny"})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"runs.parquet", "summary.parquet", "curves.parquet", "summary.md", "manifest.json"}
	if !reflect.DeepEqual(res.Files, want) {
		t.Errorf("files %v, want %v", res.Files, want)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != len(want) {
		t.Errorf("folder holds %d entries, want exactly %d (no temporaries)", len(entries), len(want))
	}
	d, err := results.ReadResultDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	m := d.Manifest
	if m.Tool != "tiny" || m.Suite != s.Name || m.SuiteSHA256 != s.Hash() || m.Seed != 9 || m.Runs != 3 || m.Workers != 2 ||
		strings.Join(m.Command, " ") != "tiny run" || !reflect.DeepEqual(m.Files, want) {
		t.Errorf("manifest %+v", m)
	}
	if len(d.Runs) != 2*3 {
		t.Errorf("%d runs rows, want 2 pairs x 3 runs", len(d.Runs))
	}
	if len(d.Summary) != len(res.Rows) || len(res.Rows) != 2 {
		t.Fatalf("%d summary rows read, %d returned; want 2", len(d.Summary), len(res.Rows))
	}
	for i, r := range res.Rows {
		got := d.Summary[i]
		if got.Problem != r.Problem || got.Filter != r.Filter || got.Config != r.Config ||
			got.Summary.RMSE != r.Summary.RMSE || math.IsNaN(r.Summary.RMSE) {
			t.Errorf("row %d read back as %+v, written %+v", i, got, r)
		}
	}
	if res.Provenance.Tool != "tiny "+m.Version || res.Provenance.SuiteSHA256 != s.Hash() {
		t.Errorf("provenance %+v", res.Provenance)
	}
}

// A folder that does not exist is an error naming it, and nothing runs.
func TestWriteRunMissingFolder(t *testing.T) {
	s, _ := bench.ParseSuite("tiny.toml", []byte(tinySuite), bench.Builtin())
	dir := filepath.Join(t.TempDir(), "absent")
	calls := 0
	_, err := WriteRun(s, dir, RunOptions{Progress: func(int, int) { calls++ }})
	if err == nil || !strings.Contains(err.Error(), "absent") || calls != 0 {
		t.Fatalf("error %v after %d progress calls", err, calls)
	}
}
