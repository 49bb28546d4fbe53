package recorded

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
)

// phoneType is a line type of a smartphone trace that becomes columns.
type phoneType struct {
	name   string // the TYPE_ name
	sensor string
	values int      // values read after the type
	cols   []string // column names, one per value (a rotation vector gets w too)
	unit   string
	frame  string
	role   Role
	rotvec bool // x, y, z of a unit quaternion; w is derived
}

// phoneTypes are the line types read, in the order of their columns. Units
// are those of Android's SensorEvent (m/s^2, rad/s, uT), in the device
// frame (x right, y up the screen, z out of it); the rotation vector is
// the vector part of the unit quaternion of the device in the ENU world
// frame; waypoints are positions in metres on the floor map (as the
// trace format's README gives them).
var phoneTypes = []*phoneType{
	{name: "TYPE_ACCELEROMETER", sensor: "accelerometer", values: 3, cols: axes("accel"), unit: "m/s^2", frame: "device"},
	{name: "TYPE_GYROSCOPE", sensor: "gyroscope", values: 3, cols: axes("gyro"), unit: "rad/s", frame: "device"},
	{name: "TYPE_MAGNETIC_FIELD", sensor: "magnetic_field", values: 3, cols: axes("mag"), unit: "uT", frame: "device"},
	{name: "TYPE_ROTATION_VECTOR", sensor: "rotation_vector", values: 3, cols: []string{"quat_w", "quat_x", "quat_y", "quat_z"}, unit: "1", frame: "enu", rotvec: true},
	{name: "TYPE_ACCELEROMETER_UNCALIBRATED", sensor: "accelerometer_uncalibrated", values: 6, cols: append(axes("accel_uncal"), axes("accel_uncal_bias")...), unit: "m/s^2", frame: "device"},
	{name: "TYPE_GYROSCOPE_UNCALIBRATED", sensor: "gyroscope_uncalibrated", values: 6, cols: append(axes("gyro_uncal"), axes("gyro_uncal_drift")...), unit: "rad/s", frame: "device"},
	{name: "TYPE_MAGNETIC_FIELD_UNCALIBRATED", sensor: "magnetic_field_uncalibrated", values: 6, cols: append(axes("mag_uncal"), axes("mag_uncal_bias")...), unit: "uT", frame: "device"},
	{name: "TYPE_WAYPOINT", sensor: "waypoint", values: 2, cols: []string{"true_pos_x", "true_pos_y"}, unit: "m", frame: "map", role: True},
}

func axes(prefix string) []string {
	return []string{prefix + "_x", prefix + "_y", prefix + "_z"}
}

// maxSkipKinds bounds the distinct line types counted by name; the rest
// are counted as "other".
const maxSkipKinds = 64

// LoadSmartphone reads a smartphone trace: tab-separated lines
// "unix_time_ms TYPE values...", '#' lines of metadata (startTime:,
// SiteID:, FloorName:, Brand:, Model:, ...). The accelerometer, gyroscope,
// magnetometer, rotation vector, their uncalibrated variants and the
// surveyor's waypoints (ground-truth x, y) are read; lines may come in any
// order and are sorted by time per type. Other line types (Wi-Fi,
// Bluetooth, ...) are counted in Meta.Skipped. T counts from the header's
// startTime, or from the first sample; the sequence id is the file name
// without extension. Errors are as for LoadCSV.
func LoadSmartphone(path string) (*Recording, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("recorded: %w", err)
	}
	defer f.Close()
	base := filepath.Base(path)
	return readSmartphone(path, strings.TrimSuffix(base, filepath.Ext(base)), f)
}

func readSmartphone(name, seq string, r io.Reader) (*Recording, error) {
	lr := newLineReader(r)
	var e errs
	streams := make([]*stream, len(phoneTypes))
	byName := make(map[string]int, len(phoneTypes))
	for i, pt := range phoneTypes {
		byName[pt.name] = i
		cols := make([]Column, len(pt.cols))
		for j, c := range pt.cols {
			cols[j] = Column{Name: c, Unit: pt.unit, Frame: pt.frame, Role: pt.role}
		}
		streams[i] = newStream(pt.sensor, name, cols)
	}
	skipped := map[string]int{}
	header := map[string]string{}
	startLine := 0 // line of the startTime header
	var fields [][]byte
	vals := make([]float64, 4)
	for !e.full() {
		line, err := lr.next()
		if err == io.EOF {
			break
		}
		if err == errLongLine {
			e.add(name, lr.line, "", err.Error())
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("recorded: %s: %w", name, err)
		}
		if len(bytes.TrimSpace(line)) == 0 {
			continue
		}
		fields = splitFields(fields[:0], line, '\t')
		if len(fields[0]) > 0 && fields[0][0] == '#' {
			for _, f := range fields[1:] {
				if k, v, ok := strings.Cut(string(f), ":"); ok {
					header[k] = v
					if k == "startTime" {
						startLine = lr.line
					}
				}
			}
			continue
		}
		if len(fields) < 2 || len(fields[1]) == 0 {
			e.add(name, lr.line, "", "want time, type and values separated by tabs")
			continue
		}
		t, err := parseTime(fields[0], 1e6)
		if err != nil {
			e.add(name, lr.line, "time", err.Error())
			continue
		}
		i, ok := byName[string(fields[1])]
		if !ok {
			kind := string(fields[1])
			if _, seen := skipped[kind]; !seen && (len(skipped) >= maxSkipKinds || len(kind) > 64) {
				kind = "other"
			}
			skipped[kind]++
			continue
		}
		pt := phoneTypes[i]
		if len(fields)-2 < pt.values {
			e.add(name, lr.line, pt.name, fmt.Sprintf("%d values, want %d", len(fields)-2, pt.values))
			continue
		}
		vals = vals[:0]
		bad := false
		for j := 0; j < pt.values; j++ {
			v, err := parseValue(fields[2+j])
			if err != nil {
				e.add(name, lr.line, pt.name, fmt.Sprintf("value %d: %v", j+1, err))
				bad = true
				break
			}
			vals = append(vals, v)
		}
		if bad {
			continue
		}
		if pt.rotvec {
			x, y, z := vals[0], vals[1], vals[2]
			// w = cos(theta/2) = sqrt(1 - |v|^2) for the unit quaternion
			// whose vector part is v (clamped for rounding).
			vals = append(vals[:0], math.Sqrt(max(0, 1-x*x-y*y-z*z)), x, y, z)
		}
		streams[i].add(t, lr.line, vals)
	}
	var used []*stream
	for _, s := range streams {
		if len(s.t) > 0 {
			used = append(used, s)
		}
	}
	meta := Meta{Dataset: "smartphone-trace", Sequence: seq, Source: phoneSource(name, header)}
	if len(skipped) > 0 {
		meta.Skipped = skipped
	}
	var origin int64
	if st, ok := header["startTime"]; ok {
		if v, err := parseTime([]byte(st), 1e6); err == nil {
			origin = v
		} else {
			e.add(name, startLine, "startTime", err.Error())
		}
	}
	if len(used) == 0 && e.err() == nil {
		return nil, &LoadError{File: name, Line: max(lr.line, 1), Msg: "no sensor or waypoint lines"}
	}
	return finish(name, meta, used, true, origin, &e)
}

// phoneSource describes the trace from its header.
func phoneSource(name string, h map[string]string) string {
	var parts []string
	parts = append(parts, "smartphone trace "+filepath.Base(name))
	for _, k := range []string{"SiteID", "FloorName", "Brand", "Model", "AndroidName"} {
		if v := h[k]; v != "" {
			parts = append(parts, k+" "+v)
		}
	}
	return strings.Join(parts, ", ")
}
