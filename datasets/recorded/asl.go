package recorded

import (
	"fmt"
	"os"
	"path/filepath"
)

// aslMapping reads the ASL layout of visual-inertial datasets: the IMU in
// imu0/data.csv (Unix-time ns timestamps, angular rate w_RS_S in rad/s and
// specific force a_RS_S in m/s^2, both in the sensor frame S) and the
// ground-truth estimate in state_groundtruth_estimate0/data.csv (position
// p_RS_R in m and velocity v_RS_R in m/s in the reference frame R, the
// orientation q_RS of S in R scalar first, and the gyro and accelerometer
// biases in S). Layout as published with the EuRoC MAV datasets (Burri et
// al. 2016, "The EuRoC micro aerial vehicle datasets", IJRR 35(10)).
const aslMapping = `
dataset   = "asl"
time_base = "unix"

[[file]]
path      = "imu0/data.csv"
sensor    = "imu0"
time      = "timestamp"
time_unit = "ns"
  [[file.quantity]]
  kind    = "gyro"
  columns = ["w_RS_S_x", "w_RS_S_y", "w_RS_S_z"]
  unit    = "rad/s"
  frame   = "sensor"
  [[file.quantity]]
  kind    = "accelerometer"
  columns = ["a_RS_S_x", "a_RS_S_y", "a_RS_S_z"]
  unit    = "m/s^2"
  frame   = "sensor"

[[file]]
path      = "state_groundtruth_estimate0/data.csv"
sensor    = "state_groundtruth_estimate0"
time      = "timestamp"
time_unit = "ns"
  [[file.quantity]]
  kind    = "position"
  role    = "true"
  columns = ["p_RS_R_x", "p_RS_R_y", "p_RS_R_z"]
  unit    = "m"
  frame   = "reference"
  [[file.quantity]]
  kind    = "orientation"
  role    = "true"
  columns = ["q_RS_w", "q_RS_x", "q_RS_y", "q_RS_z"]
  order   = "wxyz"
  frame   = "reference"
  [[file.quantity]]
  kind    = "velocity"
  role    = "true"
  columns = ["v_RS_R_x", "v_RS_R_y", "v_RS_R_z"]
  unit    = "m/s"
  frame   = "reference"
  [[file.quantity]]
  kind    = "gyro-bias"
  role    = "true"
  columns = ["b_w_RS_S_x", "b_w_RS_S_y", "b_w_RS_S_z"]
  unit    = "rad/s"
  frame   = "sensor"
  [[file.quantity]]
  kind    = "accel-bias"
  role    = "true"
  columns = ["b_a_RS_S_x", "b_a_RS_S_y", "b_a_RS_S_z"]
  unit    = "m/s^2"
  frame   = "sensor"
`

// LoadASL reads a sequence in the ASL layout (see aslMapping): dir is the
// sequence folder or its mav0 folder. The ground truth is optional. The
// dataset is "asl" and the sequence id the name of the sequence folder;
// Start is the first sample's time. Errors are as for LoadCSV.
func LoadASL(dir string) (*Recording, error) {
	m, err := ParseMapping("built-in ASL mapping", []byte(aslMapping))
	if err != nil {
		panic("recorded: " + err.Error())
	}
	root := dir
	if isDir(filepath.Join(dir, "mav0", "imu0")) {
		root = filepath.Join(dir, "mav0")
	} else if !isDir(filepath.Join(dir, "imu0")) {
		return nil, fmt.Errorf("recorded: %s: no imu0 folder (nor mav0/imu0): not the ASL layout", dir)
	}
	seq := filepath.Base(filepath.Clean(dir))
	if seq == "mav0" {
		seq = filepath.Base(filepath.Dir(filepath.Clean(dir)))
	}
	m.meta.Sequence = seq
	if _, err := os.Stat(filepath.Join(root, filepath.FromSlash(m.files[1].path))); os.IsNotExist(err) {
		m.files = m.files[:1]
	}
	m.meta.Source = "ASL layout: " + m.files[0].path
	if len(m.files) > 1 {
		m.meta.Source += ", " + m.files[1].path
	}
	return LoadCSV(m, root)
}

func isDir(p string) bool {
	fi, err := os.Stat(p)
	return err == nil && fi.IsDir()
}
