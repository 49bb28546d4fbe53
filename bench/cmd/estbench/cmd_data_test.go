package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/estbench/estbench/datasets/recorded"
)

// sharedSample returns a path in the shared datasets folder beside the
// project (../shared/datasets from the project root; this test runs in
// bench/cmd/estbench/). It skips when the sample is absent and fails
// under CI=true.
func sharedSample(t *testing.T, parts ...string) string {
	t.Helper()
	p := filepath.Join(append([]string{"..", "..", "..", "..", "shared", "datasets"}, parts...)...)
	if _, err := os.Stat(p); err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("shared sample %s missing under CI: %v", p, err)
		}
		t.Skipf("shared sample %s not present (expected beside the project at ../shared/datasets): %v", p, err)
	}
	return p
}

const broadMappingPath = "../../../datasets/recorded/mappings/broad-imu-mocap.toml"

func TestDataHelp(t *testing.T) {
	for _, args := range [][]string{{"data", "-h"}, {"data", "import", "-h"}, {"data", "show", "-h"}, {"help", "data"}} {
		code, out, errOut := runCLI(t, args...)
		if code != exitOK || !strings.Contains(out+errOut, "Usage") {
			t.Errorf("%v: exit %d, %q", args, code, out+errOut)
		}
	}
	if code, _, e := runCLI(t, "data", "imprt"); code != exitUsage || !strings.Contains(e, `did you mean "import"`) {
		t.Errorf("unknown subcommand: exit %d, %q", code, e)
	}
}

func TestDataImportUsageErrors(t *testing.T) {
	out := t.TempDir()
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"--out", out, "x"}, "--format is required"},
		{[]string{"--format", "gpz", "--out", out, "x"}, `unknown format "gpz" (did you mean "gpx"?)`},
		{[]string{"--format", "gpx", "x"}, "--out DIR is required"},
		{[]string{"--format", "gpx", "--out", out}, "no input FILE"},
		{[]string{"--format", "csv", "--out", out, "x"}, "--format csv needs --mapping FILE"},
		{[]string{"--format", "gpx", "--mapping", "m.toml", "--out", out, "x"}, "--mapping is only for --format csv"},
	}
	for _, c := range cases {
		code, _, e := runCLI(t, append([]string{"data", "import"}, c.args...)...)
		if code != exitUsage || !strings.Contains(e, c.want) {
			t.Errorf("%v: exit %d, %q; want 2 and %q", c.args, code, e, c.want)
		}
	}
}

// TestDataImportBROAD imports the BROAD sample with the shipped mapping and
// shows it; figures from its SOURCE.md (5,714 rows, t = 32.3260 ..
// 52.3215 s, 285.714... Hz = 1/0.0035 s).
func TestDataImportBROAD(t *testing.T) {
	dir := sharedSample(t, "broad-imu-mocap")
	out := filepath.Join(t.TempDir(), "rec")
	code, o, e := runCLI(t, "data", "import", "--format", "csv", "--mapping", broadMappingPath, dir, "--out", out)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, e)
	}
	file := filepath.Join(out, "21_undisturbed_fast_combined.arrow")
	if !strings.Contains(o, file+": 5714 rows, 17 columns, 19.9955 s") {
		t.Errorf("stdout %q", o)
	}
	rec, err := recorded.ReadFile(file)
	if err != nil || rec.Len() != 5714 {
		t.Fatalf("%v, %d rows", err, rec.Len())
	}
	code, o, e = runCLI(t, "data", "show", file)
	if code != exitOK {
		t.Fatalf("show: exit %d: %s", code, e)
	}
	for _, want := range []string{
		"dataset   BROAD",
		"rows      5714",
		"span      32.326 .. 52.3215 s (19.9955 s)",
		"start     unknown",
		"imu    5714     285.714 Hz  gyro_x gyro_y gyro_z accel_x accel_y accel_z mag_x mag_y mag_z",
		"true_quat_w  1      enu     true      5714     285.714 Hz  0.0035 s from t = 32.326 s",
	} {
		if !strings.Contains(o, want) {
			t.Errorf("show output lacks %q:\n%s", want, o)
		}
	}
}

func TestDataImportBadInputWritesNothing(t *testing.T) {
	dir := t.TempDir()
	mapping := filepath.Join(dir, "m.toml")
	os.WriteFile(mapping, []byte("dataset = \"survey-drone\"\n[[file]]\npath = \"imu.csv\"\ntime = \"t\"\ntime_unit = \"s\"\n[[file.quantity]]\nkind = \"gyro\"\ncolumns = [\"gx\", \"gy\"]\nunit = \"rad/s\"\nframe = \"body\"\n"), 0o644)
	data := filepath.Join(dir, "flight1")
	os.MkdirAll(data, 0o755)
	os.WriteFile(filepath.Join(data, "imu.csv"), []byte("t,gx,gy\n0,1,2\n0.1,1,x\n0.2,3,4\n"), 0o644)
	out := filepath.Join(dir, "out")
	code, _, e := runCLI(t, "data", "import", "--format", "csv", "--mapping", mapping, data, "--out", out)
	if code != exitUsage || !strings.Contains(e, filepath.Join(data, "imu.csv")+`:3: gy: not a number: "x"`) || !strings.Contains(e, "nothing written") {
		t.Fatalf("exit %d, stderr %q", code, e)
	}
	if _, err := os.Stat(out); !os.IsNotExist(err) {
		t.Errorf("output folder made: %v", err)
	}
	code, o, e := runCLI(t, "data", "import", "--keep-going", "--format", "csv", "--mapping", mapping, data, "--out", out)
	if code != exitOK || !strings.Contains(e, ":3: gy:") || !strings.Contains(o, "flight1.arrow: 2 rows, 2 columns") {
		t.Fatalf("--keep-going: exit %d, %q %q", code, o, e)
	}
	// A mapping mistake is reported with its line.
	os.WriteFile(mapping, []byte("dataset = \"d\"\nfiles = 1\n"), 0o644)
	code, _, e = runCLI(t, "data", "import", "--format", "csv", "--mapping", mapping, data, "--out", out)
	if code != exitUsage || !strings.Contains(e, mapping+`:2: files: unknown key (did you mean "file"?)`) {
		t.Errorf("mapping: exit %d, %q", code, e)
	}
	// show refuses what is not a recording.
	code, _, e = runCLI(t, "data", "show", filepath.Join(data, "imu.csv"))
	if code != exitUsage || !strings.Contains(e, "not an Arrow IPC file") {
		t.Errorf("show csv: exit %d, %q", code, e)
	}
}

func TestDataImportASL(t *testing.T) {
	out := t.TempDir()
	code, o, e := runCLI(t, "data", "import", "../../../datasets/recorded/testdata/asl/MH_constructed", "--format", "asl", "--out", out, "--licence", "made up for the tests")
	if code != exitOK || !strings.Contains(o, "MH_constructed.arrow: 7 rows, 22 columns") {
		t.Fatalf("exit %d: %q %q", code, o, e)
	}
	rec, err := recorded.ReadFile(filepath.Join(out, "MH_constructed.arrow"))
	if err != nil || rec.Meta.Licence != "made up for the tests" || rec.Meta.Dataset != "asl" {
		t.Fatalf("%v %+v", err, rec.Meta)
	}
	// The same sequence twice would overwrite itself: refused.
	code, _, e = runCLI(t, "data", "import", "--format", "asl", "--out", out,
		"../../../datasets/recorded/testdata/asl/MH_constructed", "../../../datasets/recorded/testdata/asl/MH_constructed/mav0")
	if code != exitUsage || !strings.Contains(e, "both be written to MH_constructed.arrow") {
		t.Errorf("duplicate: exit %d, %q", code, e)
	}
}

// TestDataImportTracks imports the GPX and AIS CSV samples; counts from
// their SOURCE.md files.
func TestDataImportTracks(t *testing.T) {
	gpx := sharedSample(t, "gpx-gpxpy-tracks", "cerknicko-jezero.gpx")
	out := t.TempDir()
	code, o, e := runCLI(t, "data", "import", "--format", "gpx", gpx, "--out", out)
	if code != exitOK {
		t.Fatalf("gpx: exit %d: %s", code, e)
	}
	// SOURCE.md: 8 tracks, the first empty; the rest have 173, 52, 2, 44,
	// 2, 2, 21 points.
	for i, n := range []string{"173", "52", "2", "44", "2", "2", "21"} {
		want := filepath.Join(out, "ACTIVE_LOG_"+string(rune('2'+i))+".arrow: "+n+" rows")
		if !strings.Contains(o, want) {
			t.Errorf("gpx output lacks %q:\n%s", want, o)
		}
	}
	rec, err := recorded.ReadFile(filepath.Join(out, "ACTIVE_LOG_2.arrow"))
	if err != nil {
		t.Fatal(err)
	}
	// Track points lat 45.744..45.792 (SOURCE.md); the local frame is
	// about the first point, which is therefore at the origin.
	lat, px := rec.Column("lat"), rec.Column("pos_x")
	if lat.Values[0] < 45.744 || lat.Values[0] > 45.792 || px.Values[0] != 0 || !strings.HasPrefix(px.Frame, "enu@45.7") {
		t.Errorf("lat %v, pos_x %v in %s", lat.Values[0], px.Values[0], px.Frame)
	}

	csv := sharedSample(t, "ais-marinecadastre-nyharbor", "ais_2022-01-03_nyharbor_0000-0025Z.csv")
	out = t.TempDir()
	code, _, e = runCLI(t, "data", "import", "--format", "ais-csv", csv, "--out", out)
	if code != exitOK {
		t.Fatalf("ais-csv: exit %d: %s", code, e)
	}
	ents, _ := os.ReadDir(out)
	vessels := map[string]bool{}
	for _, en := range ents {
		mmsi, _, _ := strings.Cut(strings.TrimSuffix(en.Name(), ".arrow"), "-part")
		vessels[mmsi] = true
	}
	// SOURCE.md: 218 distinct MMSI.
	if len(vessels) != 218 {
		t.Errorf("%d vessels in %d files, SOURCE.md says 218 distinct MMSI", len(vessels), len(ents))
	}
}
