package recorded

import (
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestBROAD loads the BROAD sample with the shipped mapping and checks it
// against the sample's SOURCE.md (the dataset: Laidig et al. 2021, "BROAD -
// A Benchmark for Robust Inertial Orientation Estimation", Data 6(7):72).
func TestBROAD(t *testing.T) {
	dir := broadDir(t)
	rec, err := LoadCSV(broadMapping(t), dir)
	if err != nil {
		t.Fatal(err)
	}
	// SOURCE.md: 5,714 rows, t = 32.3260 s .. 52.3215 s after trial start,
	// imu.csv and groundtruth.csv cover the same samples row by row.
	if rec.Len() != 5714 {
		t.Fatalf("%d rows, SOURCE.md says 5,714", rec.Len())
	}
	if rec.T[0] != 32.326 || rec.T[rec.Len()-1] != 52.3215 {
		t.Errorf("span %v .. %v, SOURCE.md says 32.3260 .. 52.3215", rec.T[0], rec.T[rec.Len()-1])
	}
	// SOURCE.md: sampling rate 285.714... Hz = 1/0.0035 s; t_s are exact
	// multiples of 0.0035 printed to 4 decimals, so the mean rate is
	// 5713 intervals over 19.9955 s.
	if len(rec.Meta.Sensors) != 2 {
		t.Fatalf("sensors %+v", rec.Meta.Sensors)
	}
	for _, s := range rec.Meta.Sensors {
		if s.Samples != 5714 || math.Abs(s.RateHz-1/0.0035) > 1e-9*s.RateHz {
			t.Errorf("sensor %s: %d samples at %.9g Hz, want 5714 at %.9g", s.Name, s.Samples, s.RateHz, 1/0.0035)
		}
	}
	for _, st := range rec.Stats() {
		// SOURCE.md: this window contains no NaN in the reference.
		if st.Samples != 5714 || math.Abs(st.LongestGap-0.0035) > 1e-12 {
			t.Errorf("%s: %d samples, longest gap %v s; want 5714 and 0.0035", st.Name, st.Samples, st.LongestGap)
		}
	}
	if len(rec.Columns) != 17 {
		t.Fatalf("%d columns, want 9 IMU + 7 truth + the evaluation flag", len(rec.Columns))
	}
	// SOURCE.md: 4,571 rows with movement == 1, the first at sample index 10379
	// (row 10379 - 9236 = 1143).
	ev, n := rec.Column("evaluate"), 0
	for i, v := range ev.Values {
		if v == 1 {
			if n == 0 && i != 1143 {
				t.Errorf("first evaluated row %d, want 1143", i)
			}
			n++
		}
	}
	if n != 4571 {
		t.Errorf("%d rows flagged for evaluation, want 4571", n)
	}
	for _, c := range rec.Columns {
		if c.Valid != nil {
			t.Errorf("%s has nulls", c.Name)
		}
	}
	// The first row of imu.csv and groundtruth.csv, bit for bit (the files
	// hold Python repr floats, the shortest round-trip form of the doubles).
	first := map[string]float64{
		"gyro_x": 0.002131047016685077, "accel_z": 9.860071125378163, "mag_z": -41.2070351993747,
		"true_quat_w": 0.999844919802366, "true_quat_z": -0.01449143527230521, "true_pos_z": 1.2240354140443455,
	}
	for name, want := range first {
		if got := rec.Column(name).Values[0]; got != want {
			t.Errorf("%s[0] = %v, want %v", name, got, want)
		}
	}
	// SOURCE.md: gyro up to 10.1 rad/s (the largest component; the norm
	// reaches 12.7), position x -0.41..0.17, y -1.11..0.04, z 0.82..1.90 m.
	checkSpan := func(name string, lo, hi, tol float64) {
		t.Helper()
		c := rec.Column(name)
		mn, mx := math.Inf(1), math.Inf(-1)
		for _, v := range c.Values {
			mn, mx = min(mn, v), max(mx, v)
		}
		if math.Abs(mn-lo) > tol || math.Abs(mx-hi) > tol {
			t.Errorf("%s spans %.4f .. %.4f, SOURCE.md says %.2f .. %.2f", name, mn, mx, lo, hi)
		}
	}
	checkSpan("true_pos_x", -0.41, 0.17, 0.005)
	checkSpan("true_pos_y", -1.11, 0.04, 0.005)
	checkSpan("true_pos_z", 0.82, 1.90, 0.005)
	gmax := 0.0
	for _, n := range []string{"gyro_x", "gyro_y", "gyro_z"} {
		for _, v := range rec.Column(n).Values {
			gmax = max(gmax, math.Abs(v))
		}
	}
	if math.Abs(gmax-10.1) > 0.05 {
		t.Errorf("largest gyro component %.3f rad/s, SOURCE.md says up to 10.1", gmax)
	}
	// SOURCE.md: specific force includes gravity, ~+9.8 m/s^2 on z during
	// the 4.0 s at rest before t = 36.3265 s.
	sum, n := 0.0, 0
	for i, tt := range rec.T {
		if tt < 36.3265 {
			sum += rec.Column("accel_z").Values[i]
			n++
		}
	}
	if n != 1143 || math.Abs(sum/float64(n)-9.8) > 0.05 {
		t.Errorf("at rest: %d rows, mean accel_z %.3f; want 1143 rows (4.0 s at 1/0.0035 s) and about 9.8", n, sum/float64(n))
	}
	// SOURCE.md: the magnetometer repeats between rows, ~29 % of steps.
	same := 0
	mx, my, mz := rec.Column("mag_x").Values, rec.Column("mag_y").Values, rec.Column("mag_z").Values
	for i := 1; i < rec.Len(); i++ {
		if mx[i] == mx[i-1] && my[i] == my[i-1] && mz[i] == mz[i-1] {
			same++
		}
	}
	if f := float64(same) / float64(rec.Len()-1); math.Abs(f-0.29) > 0.005 {
		t.Errorf("magnetometer unchanged on %.3f of steps, SOURCE.md says ~29 %%", f)
	}
	// A unit quaternion (SOURCE.md: "unit quaternion wrt. ENU reference frame").
	for i := 0; i < rec.Len(); i++ {
		var s float64
		for _, n := range []string{"true_quat_w", "true_quat_x", "true_quat_y", "true_quat_z"} {
			v := rec.Column(n).Values[i]
			s += v * v
		}
		if math.Abs(math.Sqrt(s)-1) > 1e-12 {
			t.Fatalf("row %d: |q| = %v", i, math.Sqrt(s))
		}
	}
	if rec.Meta.Dataset != "BROAD" || rec.Meta.Sequence != "21_undisturbed_fast_combined" || !rec.Meta.Start.IsZero() {
		t.Errorf("meta %+v", rec.Meta)
	}
	c := rec.Column("true_quat_w")
	if c.Role != True || c.Frame != "enu" || c.Unit != "1" || rec.Column("gyro_x").Unit != "rad/s" {
		t.Errorf("column metadata %+v", *c)
	}
}

func writeFiles(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for name, text := range files {
		p := filepath.Join(dir, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

func mustMapping(t *testing.T, text string) *Mapping {
	t.Helper()
	m, err := ParseMapping("m.toml", []byte(text))
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// A survey drone's logger: IMU at 4 Hz in one TSV file, a position fix at
// 1 Hz in another, joined on time. Scenario of our own.
const droneMapping = `
dataset = "survey-drone"
[[file]]
path = "imu.tsv"
delimiter = "\t"
time = "time"
time_unit = "ms"
  [[file.quantity]]
  kind = "gyro"
  columns = ["gx", "gy", "gz"]
  unit = "deg/s"
  frame = "body"
  [[file.quantity]]
  kind = "accelerometer"
  columns = ["ax"]
  unit = "g"
  frame = "body"
[[file]]
path = "fix.csv"
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "velocity"
  role = "true"
  columns = ["ve", "vn"]
  unit = "kn"
  frame = "enu"
  [[file.quantity]]
  kind = "orientation"
  columns = ["qx", "qy", "qz", "qw"]
  order = "xyzw"
  frame = "enu"
  [[file.quantity]]
  kind = "magnetometer"
  columns = ["m"]
  unit = "G"
  frame = "body"
`

func TestCSVJoinUnitsAndNulls(t *testing.T) {
	dir := writeFiles(t, map[string]string{
		"imu.tsv": "time\tgx\tgy\tgz\tax\n" +
			"0\t180\t0\t-90\t1\n" +
			"250\t0\t0\t0\t\n" +
			"500\t1\t2\t3\tNaN\n" +
			"750\t0\t0\t0\t0.5\n" +
			"1000\t0\t0\t0\t1\n",
		"fix.csv": "t, ve, vn, qx, qy, qz, qw, m\r\n" +
			"# a comment line\r\n" +
			"0.0, 1, 2, 0.1, 0.2, 0.3, 0.9, 0.5\r\n" +
			"\r\n" +
			"1.0, 3, 4, 0, 0, 0, 1, 0.25\r\n" +
			"1.5, 5, 6, 0, 0, 1, 0, 1\r\n",
	})
	rec, err := LoadCSV(mustMapping(t, droneMapping), dir)
	if err != nil {
		t.Fatal(err)
	}
	wantT := []float64{0, 0.25, 0.5, 0.75, 1, 1.5}
	if !equalBits(rec.T, wantT) {
		t.Fatalf("T = %v, want %v", rec.T, wantT)
	}
	if rec.Meta.Sequence != filepath.Base(dir) {
		t.Errorf("sequence %q, want the folder name", rec.Meta.Sequence)
	}
	nan := math.NaN()
	// Conversion factors from the SI Brochure (BIPM 2019, 9th ed., table
	// 8 and section 4): 1 deg = pi/180 rad; g_n = 9.80665 m/s^2 (3rd CGPM
	// 1901); 1 kn = 1852 m / 3600 s; 1 G = 1e-4 T = 100 uT.
	want := map[string][]float64{
		"gyro_x":     {math.Pi, 0, math.Pi / 180, 0, 0, nan},
		"gyro_z":     {-math.Pi / 2, 0, 3 * math.Pi / 180, 0, 0, nan},
		"accel_x":    {9.80665, nan, nan, 0.5 * 9.80665, 9.80665, nan},
		"true_vel_x": {1852.0 / 3600, nan, nan, nan, 3 * 1852.0 / 3600, 5 * 1852.0 / 3600},
		"true_vel_y": {2 * 1852.0 / 3600, nan, nan, nan, 4 * 1852.0 / 3600, 6 * 1852.0 / 3600},
		"quat_w":     {0.9, nan, nan, nan, 1, 0},
		"quat_x":     {0.1, nan, nan, nan, 0, 0},
		"quat_z":     {0.3, nan, nan, nan, 0, 1},
		"mag_x":      {50, nan, nan, nan, 25, 100},
	}
	for name, w := range want {
		c := rec.Column(name)
		if c == nil {
			t.Fatalf("no column %s", name)
		}
		for i, v := range w {
			if math.IsNaN(v) {
				if c.Has(i) || !math.IsNaN(c.Values[i]) {
					t.Errorf("%s[%d] = %v, want null", name, i, c.Values[i])
				}
				continue
			}
			if !c.Has(i) || math.Abs(c.Values[i]-v) > 1e-15*math.Abs(v) {
				t.Errorf("%s[%d] = %v (valid %v), want %v", name, i, c.Values[i], c.Has(i), v)
			}
		}
	}
	names := make([]string, len(rec.Columns))
	for i, c := range rec.Columns {
		names[i] = c.Name
	}
	if got := strings.Join(names, " "); got != "gyro_x gyro_y gyro_z accel_x true_vel_x true_vel_y quat_w quat_x quat_y quat_z mag_x" {
		t.Errorf("columns %s", got)
	}
	st := rec.Stats()
	if st[3].Name != "accel_x" || st[3].Samples != 3 || st[3].LongestGap != 0.75 || st[3].GapStart != 0 || st[3].MeanRate != 2 {
		t.Errorf("accel_x stats %+v; want 3 samples (0, 0.75, 1 s), longest gap 0.75 s from 0, 2 Hz", st[3])
	}
	if s := rec.Meta.Sensors; len(s) != 2 || s[0].Name != "imu" || s[0].RateHz != 4 || s[1].Name != "fix" || s[1].RateHz != 2/1.5 {
		t.Errorf("sensors %+v", s)
	}
}

func TestCSVRowErrors(t *testing.T) {
	m := mustMapping(t, `
dataset = "survey-drone"
[[file]]
path = "imu.csv"
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "gyro"
  columns = ["gx", "gy"]
  unit = "rad/s"
  frame = "body"
`)
	dir := writeFiles(t, map[string]string{"imu.csv": "t,gx,gy\n" +
		"0.1,1,2\n" + // 2
		"0.2,1,x\n" + // 3: bad number
		"0.3,1\n" + // 4: short
		"0.1,5,6\n" + // 5: duplicate time, and out of order
		",1,2\n" + // 6: no time
		"0.4,inf,1\n" + // 7: not finite
		"0.05,3,4\n" + // 8: out of order, fine
		"0.5,1,1e999\n", // 9: out of range
	})
	rec, err := LoadCSV(m, dir)
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("err %v, want an ErrorList", err)
	}
	file := filepath.Join(dir, "imu.csv")
	want := []string{
		file + `:3: gy: not a number: "x"`,
		file + ":4: 2 fields; the header has 3",
		file + ":5: duplicate time: line 2 has the same imu time",
		file + ":6: t: no time",
		file + `:7: gx: not finite: "inf"`,
		file + `:9: gy: number out of range: "1e999"`,
	}
	if len(list) != len(want) {
		t.Fatalf("errors:\n%v\nwant %d", err, len(want))
	}
	for i, w := range want {
		if list[i].Error() != w {
			t.Errorf("error %d = %q, want %q", i, list[i].Error(), w)
		}
	}
	if rec == nil || !equalBits(rec.T, []float64{0.05, 0.1}) || rec.Column("gyro_x").Values[0] != 3 {
		t.Fatalf("recording of the good rows: %+v", rec)
	}
}

func TestCSVTooManyErrors(t *testing.T) {
	m := mustMapping(t, "dataset = \"d\"\n[[file]]\npath = \"a.csv\"\ntime = \"t\"\ntime_unit = \"s\"\n[[file.quantity]]\nkind = \"gyro\"\ncolumns = [\"g\"]\nunit = \"rad/s\"\nframe = \"body\"\n")
	text := "t,g\n" + strings.Repeat("1,x\n", 200)
	dir := writeFiles(t, map[string]string{"a.csv": text})
	_, err := LoadCSV(m, dir)
	var list ErrorList
	if !errors.As(err, &list) || len(list) != maxErrors+1 || !strings.Contains(list[maxErrors].Msg, "stopped") || list[maxErrors].Line != maxErrors+1 {
		t.Fatalf("got %d errors, want %d and a stop at line %d: %v", len(list), maxErrors+1, maxErrors+1, err)
	}
}

func TestCSVHeaderErrors(t *testing.T) {
	m := mustMapping(t, droneMapping)
	dir := writeFiles(t, map[string]string{
		"imu.tsv": "time\tgx\tgy\tgz\tacc_x\n0\t1\t2\t3\t4\n",
		"fix.csv": "t,ve,vn,qx,qy,qz,qw,m\n",
	})
	_, err := LoadCSV(m, dir)
	var list ErrorList
	if !errors.As(err, &list) || len(list) != 1 || list[0].Line != 1 || list[0].Field != "ax" || !strings.Contains(list[0].Msg, "columns: time, gx, gy, gz, acc_x") {
		t.Fatalf("err %v", err)
	}
	// A single file read in place of the mapping's path, and an empty file.
	one := mustMapping(t, "dataset = \"d\"\n[[file]]\npath = \"a.csv\"\ntime = \"t\"\ntime_unit = \"s\"\n[[file.quantity]]\nkind = \"gyro\"\ncolumns = [\"g [rad/s]\"]\nunit = \"rad/s\"\nframe = \"body\"\n")
	dir = writeFiles(t, map[string]string{"log 7.csv": "#t [s],g [rad/s]\n1,2\n", "empty.csv": "\n\n"})
	rec, err := LoadCSV(one, filepath.Join(dir, "log 7.csv"))
	if err != nil || rec.Len() != 1 || rec.Meta.Sequence != "log 7" || rec.Column("gyro_x").Values[0] != 2 {
		t.Fatalf("single file: %v %+v", err, rec)
	}
	_, err = LoadCSV(one, filepath.Join(dir, "empty.csv"))
	if !errors.As(err, new(*LoadError)) || !strings.HasSuffix(err.Error(), "empty.csv:2: no header line") {
		t.Fatalf("empty file: %v", err)
	}
	if _, err := LoadCSV(m, filepath.Join(dir, "log 7.csv")); err == nil || !strings.Contains(err.Error(), "names 2 files") {
		t.Fatalf("two-file mapping on one file: %v", err)
	}
}

// TestParseTime checks exact decimal conversions to nanoseconds; each
// expected value is the decimal arithmetic of its input.
func TestParseTime(t *testing.T) {
	cases := []struct {
		in      string
		perUnit int64
		want    int64
	}{
		{"32.3260", 1e9, 32_326_000_000},
		{"0.0035", 1e9, 3_500_000},
		{"1403636579758555392", 1, 1403636579758555392},
		{"1.40363657975856E+018", 1, 1403636579758560000}, // a spreadsheet's rewrite of an ns timestamp
		{"1574592384967", 1e6, 1574592384967_000_000},
		{"-0.5", 1e9, -500_000_000},
		{"+12", 1e3, 12_000},
		{".25", 1e6, 250_000},
		{"7.", 1e9, 7_000_000_000},
		{"1.0000000004", 1e9, 1_000_000_000}, // rounds down
		{"1.0000000005", 1e9, 1_000_000_001}, // half rounds away from zero
		{"2.5e-9", 1e9, 3},                   // 2.5 ns
		{"12345678901234567890123", 1, 0},    // out of range, below
		{"1.00000000000000000000000009", 1e9, 1_000_000_000},
		{"0", 1, 0},
		{"0e5", 1e9, 0},
	}
	for _, c := range cases {
		got, err := parseTime([]byte(c.in), c.perUnit)
		if c.in == "12345678901234567890123" {
			if err == nil {
				t.Errorf("%s: no error, got %d", c.in, got)
			}
			continue
		}
		if err != nil || got != c.want {
			t.Errorf("parseTime(%q, %d) = %d, %v; want %d", c.in, c.perUnit, got, err, c.want)
		}
	}
	for _, bad := range []string{"", ".", "-", "1..2", "1e", "1e+", "1x", "abc", "1e99999", "1e30", "0x10", "1,5"} {
		if v, err := parseTime([]byte(bad), 1e9); err == nil {
			t.Errorf("parseTime(%q) = %d, want an error", bad, v)
		}
	}
}

func equalBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// TestFastRowMatchesRow reads random lines, plain and not, with the
// one-pass fastRow allowed and with the field-by-field reading alone, and
// checks that both give the same time, values (bit for bit) and errors.
// The reference is the field-by-field reading, which the other tests here
// check against the files' expected contents.
func TestFastRowMatchesRow(t *testing.T) {
	values := []string{"1.5", "-0.0042603487041181585", "9.860071125378163", "6.866455E-4", "-57.580566", "",
		"0", "-0", "+.5", "5.", "1e-400", "NaN", "nan", " 1.5", "1.5 ", "\t3", `"2.5"`, "x", "1e", "1e+", "1.5x",
		"1e999", "inf", "12345678901234567890123", "0x10", "1_0", "9007199254740993", "1.2.3", "--1"}
	times := []string{"0.0025", "12", "", "1.4036E+018", "abc", " 1", `"2"`, "-3.5", "1e", "1e2", "99999999999999999999"}
	for _, delim := range []string{",", "\t", ";", " "} {
		m := mustMapping(t, `dataset = "d"
[[file]]
path = "a.csv"
delimiter = "`+strings.ReplaceAll(delim, "\t", "\\t")+`"
time = "t"
time_unit = "ms"
  [[file.quantity]]
  kind = "gyro"
  columns = ["gx", "gy", "gz"]
  unit = "deg/s"
  frame = "body"
`)
		d := delim
		fm := &m.files[0]
		c := &csvReader{name: "a.csv", fm: fm, lr: newLineReader(strings.NewReader(strings.Join([]string{"a", "t", "gx", "note", "gz", "gy"}, d) + "\n"))}
		if err := c.header(); err != nil {
			t.Fatal(err)
		}
		if !c.fast {
			t.Fatalf("delimiter %q: fastRow not used", delim)
		}
		c.vals = make([]float64, len(fm.outs))
		rng := rand.New(rand.NewPCG(9, uint64(d[0])))
		plain, fast := 0, 0
		for range 50000 {
			n := 6
			if rng.IntN(10) == 0 {
				n += rng.IntN(3) - 1
			}
			good := rng.IntN(2) == 0 // plain fields only
			pick := func(from []string, plain int) string {
				if good {
					return from[rng.IntN(plain)]
				}
				return from[rng.IntN(len(from))]
			}
			fields := make([]string, n)
			for i := range fields {
				if i == 1 {
					fields[i] = pick(times, 2)
				} else {
					fields[i] = pick(values, 6)
				}
			}
			line := []byte(strings.Join(fields, d))
			c.fast = true
			t1, ok1, f1, m1 := c.row(line)
			v1 := slices.Clone(c.vals)
			c.fast = false
			t2, ok2, f2, m2 := c.row(line)
			v2 := c.vals
			if ok1 != ok2 || ok1 && (t1 != t2 || !equalBits(v1, v2)) || f1 != f2 || m1 != m2 {
				t.Fatalf("delimiter %q, line %q: fastRow allowed: %v %v %v %q %q; row alone: %v %v %v %q %q", delim, line, t1, ok1, v1, f1, m1, t2, ok2, v2, f2, m2)
			}
			if good && n == 6 {
				plain++
				if _, ok := c.fastRow(line); ok {
					fast++
				}
			}
		}
		// Plain lines are what fastRow is for.
		if fast != plain {
			t.Errorf("delimiter %q: fastRow read %d of %d plain lines", delim, fast, plain)
		}
	}
}
