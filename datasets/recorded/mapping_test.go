package recorded

import (
	"errors"
	"strings"
	"testing"
)

func TestMappingErrors(t *testing.T) {
	cases := []struct {
		name, text string
		want       []string // errors, in order
	}{
		{"unknown keys with lines", `dataset = "d"
tme_base = "unix"
[[file]]
path = "a.csv"
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "gyro"
  columns = ["g"]
  unit = "rad/s"
  frme = "body"
`, []string{
			`m.toml:2: tme_base: unknown key (did you mean "time_base"?)`,
			`m.toml:7: frame: missing or empty (the frame the gyro is expressed in)`,
			`m.toml:11: frme: unknown key (did you mean "frame"?)`,
		}},
		{"second file, second quantity", `dataset = "d"
[[file]]
path = "a.csv"
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "gyro"
  columns = ["g"]
  unit = "rad/s"
  frame = "body"
[[file]]
path = "b.csv"
time = "t"
time_unit = "minutes"
  [[file.quantity]]
  kind = "position"
  columns = ["x"]
  unit = "m"
  frame = "enu"
  [[file.quantity]]
  kind = "orientation"
  columns = ["a", "b", "c", "d"]
  order = "zyxw"
  frame = "enu"
  [[file.quantity]]
  kind = "accelerometr"
  columns = ["a"]
`, []string{
			`m.toml:14: time_unit: "minutes": want s, ms, us or ns`,
			`m.toml:23: order: "zyxw": want wxyz or xyzw (the order of the columns)`,
			`m.toml:26: kind: "accelerometr": want one of gyro, accelerometer, magnetometer, position, velocity, orientation, gyro-bias, accel-bias, flag (did you mean "accelerometer"?)`,
		}},
		{"types and values", `dataset = 3
start = "yesterday"
[[file]]
path = "a.csv"
delimiter = ";;"
skip_lines = -1
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "magnetometer"
  role = "truth"
  columns = ["a", "b", "c", "d"]
  unit = "gauss"
  frame = "body"
  name = "9mag"
`, []string{
			`m.toml:1: dataset: expected a string, got an integer`,
			`m.toml:1: dataset: missing or empty (the name of the dataset)`,
			`m.toml:2: start: "yesterday" is not an RFC 3339 time (2021-06-01T10:00:00Z)`,
			`m.toml:5: delimiter: ";;": want one character other than a quote, a line break or '#'`,
			`m.toml:6: skip_lines: expected a non-negative integer, got -1`,
			`m.toml:11: role: "truth": want measured or true`,
			`m.toml:12: columns: magnetometer needs 1 to 3 columns (x, y, z), got 4`,
			`m.toml:13: unit: "gauss" is not a unit of magnetometer: want one of G, T, mG, mT, nT, uT`,
			`m.toml:15: name: "9mag": want a letter followed by letters, digits, '_', '.' or '-'`,
		}},
		{"duplicate output column", `dataset = "d"
[[file]]
path = "a.csv"
time = "t"
time_unit = "s"
  [[file.quantity]]
  kind = "gyro"
  columns = ["g"]
  unit = "rad/s"
  frame = "body"
  [[file.quantity]]
  kind = "gyro"
  columns = [
    "h",
  ]
  unit = "rad/s"
  frame = "body"
`, []string{`m.toml:13: columns: column "gyro_x" is also made at line 6`}},
		{"no files", `dataset = "d"`, []string{`m.toml: file: missing: at least one [[file]] table`}},
		{"syntax", "dataset = \"d\"\n[[file]]\ntime_unit = s\n", []string{`m.toml:3: TOML syntax: expected value but found "s" instead`}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ParseMapping("m.toml", []byte(c.text))
			var list ErrorList
			if !errors.As(err, &list) {
				t.Fatalf("err %v, want an ErrorList", err)
			}
			var got []string
			for _, e := range list {
				got = append(got, e.Error())
			}
			if strings.Join(got, "\n") != strings.Join(c.want, "\n") {
				t.Errorf("errors:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(c.want, "\n"))
			}
		})
	}
}

func TestMappingShipped(t *testing.T) {
	m := broadMapping(t)
	if len(m.files) != 2 || len(m.files[0].outs) != 9 || len(m.files[1].outs) != 8 || m.files[1].outs[7].col.Name != "evaluate" || m.Dataset() != "BROAD" {
		t.Fatalf("mapping %+v", m)
	}
	if _, err := ParseMapping("asl", []byte(aslMapping)); err != nil {
		t.Fatal(err)
	}
}
