package recorded

import (
	"errors"
	"math"
	"strings"
	"testing"
	"time"
)

// TestSmartphoneSample reads the Indoor Location Competition 2.0 sample
// trace and checks it against its SOURCE.md.
func TestSmartphoneSample(t *testing.T) {
	rec, err := LoadSmartphone(phoneTrace(t))
	if err != nil {
		t.Fatal(err)
	}
	// SOURCE.md: startTime:1574592384967 = 2019-11-24 10:46:24.967 UTC.
	if want := time.Date(2019, 11, 24, 10, 46, 24, 967e6, time.UTC); !rec.Meta.Start.Equal(want) {
		t.Errorf("start %v, want %v", rec.Meta.Start, want)
	}
	// SOURCE.md: 1,567 samples of each sensor type, 12 waypoints; first
	// accelerometer 1574592385101, last 1574592416691 (~49.6 Hz).
	counts := map[string]int{"accelerometer": 1567, "gyroscope": 1567, "magnetic_field": 1567, "rotation_vector": 1567,
		"accelerometer_uncalibrated": 1567, "gyroscope_uncalibrated": 1567, "magnetic_field_uncalibrated": 1567, "waypoint": 12}
	if len(rec.Meta.Sensors) != len(counts) {
		t.Fatalf("sensors %+v", rec.Meta.Sensors)
	}
	for _, s := range rec.Meta.Sensors {
		if s.Samples != counts[s.Name] {
			t.Errorf("%s: %d samples, SOURCE.md says %d", s.Name, s.Samples, counts[s.Name])
		}
	}
	acc := rec.Meta.Sensors[0]
	if want := 1566 / 31.590; acc.Name != "accelerometer" || math.Abs(acc.RateHz-want) > 1e-9 || math.Abs(acc.RateHz-49.6) > 0.05 {
		t.Errorf("accelerometer at %v Hz, want 1566 intervals over 31.590 s (~49.6 Hz)", acc.RateHz)
	}
	st := rec.Stats()
	if s := st[0]; s.Name != "accel_x" || s.First != 0.134 || s.Last != 31.724 {
		t.Errorf("accel_x from %v to %v s, want 0.134 .. 31.724 (1574592385101 and ..416691 ms less the start)", s.First, s.Last)
	}
	// SOURCE.md: other line types, counted and skipped.
	wantSkip := map[string]int{"TYPE_WIFI": 1171, "TYPE_BLUE": 13, "TYPE_BLU4": 13, "TYPE_DIST1": 1, "TYPE_DIST2": 1, "TYPE_SENSOR_MAGNETIC_FIELD_ACCURACY_CHANGED": 1}
	if len(rec.Meta.Skipped) != len(wantSkip) {
		t.Errorf("skipped %v, want %v", rec.Meta.Skipped, wantSkip)
	}
	for k, v := range wantSkip {
		if rec.Meta.Skipped[k] != v {
			t.Errorf("skipped %s: %d, SOURCE.md says %d", k, rec.Meta.Skipped[k], v)
		}
	}
	// The waypoints: x 180.2 -> 212.5 m, y 158.3 -> 150.9 m (SOURCE.md);
	// the first precedes the first IMU sample, 1.8-5.5 s apart.
	wx, wy := rec.Column("true_pos_x"), rec.Column("true_pos_y")
	if wx.Role != True || wx.Unit != "m" || !wx.Has(0) || wx.Values[0] != 180.18471 || wy.Values[0] != 158.25302 || rec.Column("gyro_x").Has(0) {
		t.Errorf("first row: waypoint %v %v", wx.Values[0], wy.Values[0])
	}
	ws := st[len(st)-2]
	if ws.Name != "true_pos_x" || ws.Samples != 12 || math.Abs(ws.LongestGap-5.522) > 1e-9 {
		t.Errorf("waypoint stats %+v; want 12 samples, longest gap 5.522 s", ws)
	}
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	for i := range rec.T {
		if wx.Has(i) {
			xmin, xmax = min(xmin, wx.Values[i]), max(xmax, wx.Values[i])
			ymin, ymax = min(ymin, wy.Values[i]), max(ymax, wy.Values[i])
		}
	}
	if math.Abs(xmin-180.2) > 0.05 || math.Abs(xmax-212.5) > 0.1 || math.Abs(ymin-150.9) > 0.05 || math.Abs(ymax-158.3) > 0.05 {
		t.Errorf("waypoints x %v..%v y %v..%v", xmin, xmax, ymin, ymax)
	}
	// 1,567 sensor times and 12 waypoint times, one of which coincides
	// with a sensor time (counted with awk on the file).
	if rec.Len() != 1578 {
		t.Errorf("%d rows, want 1578", rec.Len())
	}
	// Java float formatting with exponents (SOURCE.md: 6.866455E-4).
	if d := rec.Column("gyro_uncal_drift_y"); d.Values[1] != 6.866455e-4 {
		t.Errorf("gyro drift y %v, want 6.866455E-4", d.Values[1])
	}
	// The rotation vector completed to a unit quaternion.
	q := []*Column{rec.Column("quat_w"), rec.Column("quat_x"), rec.Column("quat_y"), rec.Column("quat_z")}
	for i := range rec.T {
		if !q[0].Has(i) {
			continue
		}
		s := 0.0
		for _, c := range q {
			s += c.Values[i] * c.Values[i]
		}
		if math.Abs(s-1) > 1e-12 {
			t.Fatalf("row %d: |q|^2 = %v", i, s)
		}
	}
}

func TestSmartphoneConstructed(t *testing.T) {
	// A made-up trace: lines out of order, an unknown type, bad lines.
	trace := "#\tstartTime:1000\n" +
		"1020\tTYPE_GYROSCOPE\t0.1\t0.2\t0.3\t3\n" + // 2
		"1010\tTYPE_GYROSCOPE\t0.0\t0.0\t0.6\t3\n" + // 3
		"1015\tTYPE_WAYPOINT\t1.5\t2.5\n" + // 4
		"1030\tTYPE_ROTATION_VECTOR\t0\t0\t0.6\t3\n" + // 5
		"1040\tTYPE_NEW_SENSOR\t1\n" + // 6
		"10x0\tTYPE_GYROSCOPE\t1\t2\t3\t3\n" + // 7
		"1050\tTYPE_GYROSCOPE\t1\t2\n" + // 8
		"1060\tTYPE_ACCELEROMETER\t1\tabc\t3\t3\n" + // 9
		"lonely\n" + // 10
		"\n" +
		"1020\tTYPE_GYROSCOPE\t9\t9\t9\t3\n" // 12: same time as line 2
	rec, err := readSmartphone("trace.txt", "trace", strings.NewReader(trace))
	var list ErrorList
	if !errors.As(err, &list) {
		t.Fatalf("err %v", err)
	}
	want := []string{
		`trace.txt:7: time: not a time: "10x0"`,
		`trace.txt:8: TYPE_GYROSCOPE: 2 values, want 3`,
		`trace.txt:9: TYPE_ACCELEROMETER: value 2: not a number: "abc"`,
		`trace.txt:10: want time, type and values separated by tabs`,
		`trace.txt:12: duplicate time: line 2 has the same gyroscope time`,
	}
	if len(list) != len(want) {
		t.Fatalf("errors:\n%v", err)
	}
	for i, w := range want {
		if list[i].Error() != w {
			t.Errorf("error %d: %q, want %q", i, list[i].Error(), w)
		}
	}
	if !equalBits(rec.T, []float64{0.01, 0.015, 0.02, 0.03}) {
		t.Fatalf("T %v", rec.T)
	}
	if g := rec.Column("gyro_z"); !equalBits(g.Values[:1], []float64{0.6}) || g.Has(1) || g.Values[2] != 0.3 {
		t.Errorf("gyro_z %v", g.Values)
	}
	// w = sqrt(1 - 0.36) = 0.8 for the rotation vector (0, 0, 0.6).
	if w := rec.Column("quat_w"); !w.Has(3) || math.Abs(w.Values[3]-0.8) > 1e-15 {
		t.Errorf("quat_w %v", w.Values)
	}
	if rec.Meta.Skipped["TYPE_NEW_SENSOR"] != 1 || rec.Column("accel_x") != nil {
		t.Errorf("skipped %v", rec.Meta.Skipped)
	}
	if _, err := readSmartphone("w.txt", "w", strings.NewReader("#\tstartTime:5\n1\tTYPE_WIFI\ta\n")); err == nil || !strings.Contains(err.Error(), "no sensor or waypoint lines") {
		t.Errorf("no sensor lines: %v", err)
	}
}
