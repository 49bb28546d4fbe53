package recorded

import (
	"math"
	"path/filepath"
	"testing"
	"time"
)

// TestASL reads testdata/asl/MH_constructed, a file set constructed for
// this test to follow, from memory, the ASL layout published with the
// EuRoC MAV datasets (Burri et al. 2016, "The EuRoC micro aerial vehicle
// datasets", IJRR 35(10)): imu0/data.csv with "#timestamp [ns],w_RS_S_x
// [rad s^-1],..." and state_groundtruth_estimate0/data.csv with position,
// quaternion (w, x, y, z), velocity and biases. The numbers are invented
// (see testdata/asl/README.md).
func TestASL(t *testing.T) {
	for _, dir := range []string{"MH_constructed", filepath.Join("MH_constructed", "mav0")} {
		rec, err := LoadASL(filepath.Join("testdata", "asl", dir))
		if err != nil {
			t.Fatal(err)
		}
		if rec.Meta.Sequence != "MH_constructed" || rec.Meta.Dataset != "asl" {
			t.Errorf("%s: meta %+v", dir, rec.Meta)
		}
		// Start is the first IMU timestamp, 1700000000000000128 ns after
		// the Unix epoch; T counts exact nanoseconds from it.
		if want := time.Unix(0, 1700000000000000128).UTC(); !rec.Meta.Start.Equal(want) {
			t.Errorf("start %v, want %v", rec.Meta.Start, want)
		}
		wantT := []float64{0, 5000064e-9, 9999744e-9, 14999936e-9, 17499904e-9, 19999872e-9, 25000064e-9}
		if !equalBits(rec.T, wantT) {
			t.Fatalf("T = %v\nwant %v", rec.T, wantT)
		}
		gx := rec.Column("gyro_x")
		if gx.Unit != "rad/s" || gx.Frame != "sensor" || gx.Values[0] != 0.0125 || gx.Has(4) || gx.Has(6) || gx.Count() != 5 {
			t.Errorf("gyro_x %+v", *gx)
		}
		if az := rec.Column("accel_z"); az.Values[1] != 9.81 || az.Unit != "m/s^2" {
			t.Errorf("accel_z %v", az.Values)
		}
		qw, qx := rec.Column("true_quat_w"), rec.Column("true_quat_x")
		if qw.Role != True || qw.Frame != "reference" || !qw.Has(2) || qw.Values[3] != 0.8 || qx.Values[3] != 0.6 || qw.Has(0) || qw.Has(5) {
			t.Errorf("quaternion w %v x %v", qw.Values, qx.Values)
		}
		if !qw.Has(4) || qw.Values[4] != 1 || rec.Column("gyro_z").Has(4) {
			t.Errorf("row 4 is ground truth only: %v", qw.Values)
		}
		for name, want := range map[string]float64{"true_pos_z": 0.75, "true_vel_z": 0.3, "true_gyro_bias_z": 0.07, "true_accel_bias_y": 0.12} {
			if c := rec.Column(name); c == nil || c.Values[2] != want {
				t.Errorf("%s = %v, want %v at row 2", name, c, want)
			}
		}
		if len(rec.Meta.Sensors) != 2 || rec.Meta.Sensors[0].Samples != 6 || rec.Meta.Sensors[1].Samples != 3 {
			t.Errorf("sensors %+v", rec.Meta.Sensors)
		}
		// 6 IMU samples over 25 ms less 64 ns.
		if r := rec.Meta.Sensors[0].RateHz; math.Abs(r-5/0.025000064) > 1e-9 {
			t.Errorf("IMU rate %v", r)
		}
	}
}

func TestASLWithoutTruth(t *testing.T) {
	dir := writeFiles(t, map[string]string{
		"seq/mav0/imu0/data.csv": "#timestamp [ns],w_RS_S_x [rad s^-1],w_RS_S_y [rad s^-1],w_RS_S_z [rad s^-1],a_RS_S_x [m s^-2],a_RS_S_y [m s^-2],a_RS_S_z [m s^-2]\n" +
			"1000,1,2,3,4,5,6\n2000,1,2,3,4,5,6\n",
	})
	rec, err := LoadASL(filepath.Join(dir, "seq"))
	if err != nil {
		t.Fatal(err)
	}
	if len(rec.Columns) != 6 || len(rec.Meta.Sensors) != 1 || !equalBits(rec.T, []float64{0, 1e-6}) {
		t.Errorf("%+v", rec)
	}
	if _, err := LoadASL(dir); err == nil {
		t.Error("a folder without imu0 accepted")
	}
}
