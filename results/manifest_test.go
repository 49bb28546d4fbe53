package results

import (
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"runtime/debug"
	"slices"
	"strings"
	"testing"
	"time"
)

func TestCollectEnvironment(t *testing.T) {
	m := CollectEnvironment()
	if m.Tool != "estbench" || m.Version == "" {
		t.Errorf("tool %q version %q", m.Tool, m.Version)
	}
	if m.GoVersion != runtime.Version() || m.OS != runtime.GOOS || m.Arch != runtime.GOARCH {
		t.Errorf("go %q os %q arch %q", m.GoVersion, m.OS, m.Arch)
	}
	if m.NumCPU != runtime.NumCPU() || m.GOMAXPROCS != runtime.GOMAXPROCS(0) || m.NumCPU < 1 {
		t.Errorf("num_cpu %d gomaxprocs %d", m.NumCPU, m.GOMAXPROCS)
	}
	if m.CPU == "" {
		t.Error("empty CPU model")
	}
	// On Linux the model must be the one /proc/cpuinfo names (read here
	// without the package's parser), where the kernel gives one.
	if runtime.GOOS == "linux" {
		b, err := os.ReadFile("/proc/cpuinfo")
		if err == nil && strings.Contains(string(b), "model name") && !strings.Contains(string(b), m.CPU) {
			t.Errorf("CPU %q not in /proc/cpuinfo", m.CPU)
		}
	}
}

// The layout is that of Linux's /proc/cpuinfo on x86 ("key<TAB>: value",
// one block per logical CPU); an arm64 kernel prints no "model name".
func TestCPUModelFrom(t *testing.T) {
	x86 := "processor\t: 0\nvendor_id\t: GenuineIntel\ncpu family\t: 6\nmodel\t\t: 85\n" +
		"model name\t: Intel(R) Xeon(R) CPU @ 2.20GHz\nstepping\t: 7\n\n" +
		"processor\t: 1\nmodel name\t: Intel(R) Xeon(R) CPU @ 2.20GHz\n"
	if got := cpuModelFrom(strings.NewReader(x86)); got != "Intel(R) Xeon(R) CPU @ 2.20GHz" {
		t.Errorf("x86: %q", got)
	}
	arm := "processor\t: 0\nBogoMIPS\t: 50.00\nFeatures\t: fp asimd\nCPU implementer\t: 0x41\n"
	if got := cpuModelFrom(strings.NewReader(arm)); got != "unknown" {
		t.Errorf("arm64: %q, want unknown", got)
	}
}

// The setting keys are those runtime/debug documents for BuildSetting
// ("vcs.revision", "vcs.modified").
func TestFillBuild(t *testing.T) {
	m := Manifest{Version: "(devel)"}
	m.fillBuild(&debug.BuildInfo{
		Main:     debug.Module{Path: "github.com/estbench/estbench", Version: "v0.3.1"},
		Settings: []debug.BuildSetting{{Key: "vcs.revision", Value: "4e1f0c2"}, {Key: "vcs.modified", Value: "true"}},
	})
	if m.Version != "v0.3.1" || m.VCSRevision != "4e1f0c2" || m.VCSModified == nil || !*m.VCSModified {
		t.Errorf("from full build info: %+v", m)
	}
	m = Manifest{Version: "(devel)"}
	m.fillBuild(&debug.BuildInfo{Main: debug.Module{Path: "github.com/estbench/estbench"}})
	if m.Version != "(devel)" || m.VCSRevision != "" || m.VCSModified != nil {
		t.Errorf("from bare build info: %+v", m)
	}
}

func TestWriteManifest(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "manifest.json")
	m := CollectEnvironment()
	m.Suite, m.SuiteSHA256, m.Seed, m.Runs, m.Workers = "harbour-launch", strings.Repeat("ab", 32), 1<<63+5, 100, 2
	m.Command = []string{"estbench", "run", "--runs", "100", "suite.toml"}
	m.Start = time.Date(2025, 3, 14, 10, 26, 53, 0, time.FixedZone("CET", 3600))
	m.End = m.Start.Add(90 * time.Second)
	m.Files = []string{"summary.md", "summary.parquet", "runs.parquet", "curves.parquet"}
	if err := WriteManifest(path, m); err != nil {
		t.Fatal(err)
	}
	noTemps(t, dir, "manifest.json")
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var obj map[string]any
	if err := json.Unmarshal(b, &obj); err != nil {
		t.Fatalf("not valid JSON: %v", err)
	}
	var keys []string
	for k := range obj {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	want := []string{"arch", "command", "cpu", "end", "files", "go_version", "gomaxprocs", "num_cpu", "os",
		"runs", "seed", "start", "suite", "suite_sha256", "tool", "vcs_modified", "vcs_revision", "version", "workers"}
	if !slices.Equal(keys, want) {
		t.Errorf("keys %q, want %q", keys, want)
	}
	// RFC 3339 in UTC: 10:26:53 CET is 09:26:53Z.
	if obj["start"] != "2025-03-14T09:26:53Z" || obj["end"] != "2025-03-14T09:28:23Z" {
		t.Errorf("start %v end %v", obj["start"], obj["end"])
	}
	if !strings.Contains(string(b), `"seed": 9223372036854775813`) {
		t.Error("seed not written as an exact integer")
	}
	back, err := ReadManifest(path)
	if err != nil {
		t.Fatal(err)
	}
	if !back.Start.Equal(m.Start) || !back.End.Equal(m.End) || back.Seed != m.Seed ||
		!slices.Equal(back.Command, m.Command) || !slices.Equal(back.Files, m.Files) || back.CPU != m.CPU {
		t.Errorf("read back %+v, want %+v", back, m)
	}
	bad := filepath.Join(dir, "missing", "manifest.json")
	if err := WriteManifest(bad, m); err == nil {
		t.Error("no error writing into a missing directory")
	}
	noTemps(t, dir, "manifest.json")
}
