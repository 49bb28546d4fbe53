package recorded

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// seedLines adds the first lines of a shared sample (when present) to a
// fuzz corpus, cut into pieces of about 1 KiB at line ends (larger seeds slow the fuzzer to a crawl).
func seedLines(f *testing.F, sample, file string, lines int) {
	b, err := os.ReadFile(filepath.Join(sharedRoot, sample, file))
	if err != nil {
		return
	}
	for i, n := 0, 0; i < len(b) && n < lines; i++ {
		if b[i] == '\n' {
			n++
			if n == lines {
				b = b[:i+1]
			}
		}
	}
	for len(b) > 0 {
		k := min(len(b), 1024)
		if j := bytes.LastIndexByte(b[:k], '\n'); j > 0 && k < len(b) {
			k = j + 1
		}
		f.Add(b[:k])
		b = b[k:]
	}
}

// checkLoad is what every loader promises whatever its input: errors are
// LoadErrors with a file and a line, and a recording returned is valid
// and survives the Arrow file round trip.
func checkLoad(t *testing.T, rec *Recording, err error) {
	t.Helper()
	if err != nil {
		var list ErrorList
		var one *LoadError
		switch {
		case errors.As(err, &list):
			for _, e := range list {
				if e.File == "" || e.Line < 1 {
					t.Fatalf("error without file or line: %#v", e)
				}
			}
		case errors.As(err, &one):
			if one.File == "" || one.Line < 1 {
				t.Fatalf("error without file or line: %#v", one)
			}
		default:
			t.Fatalf("error of type %T: %v", err, err)
		}
	}
	if rec == nil {
		return
	}
	if err := rec.Validate(); err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := Encode(&buf, rec); err != nil {
		t.Fatal(err)
	}
	got, err := Decode("fuzz.arrow", buf.Bytes())
	if err != nil {
		t.Fatal(err)
	}
	if !equalBits(got.T, rec.T) || len(got.Columns) != len(rec.Columns) {
		t.Fatal("round trip changed the recording")
	}
}

// FuzzCSV reads arbitrary text as the imu.csv of the BROAD mapping.
func FuzzCSV(f *testing.F) {
	seedLines(f, "broad-imu-mocap", "imu.csv", 20)
	f.Add([]byte("sample_index,t_s,gyr_x_rad_s,gyr_y_rad_s,gyr_z_rad_s,acc_x_m_s2,acc_y_m_s2,acc_z_m_s2,mag_x_uT,mag_y_uT,mag_z_uT\n1,0.5,1,2,3,4,5,6,7,8,9\n2,0.25,,NaN,3,4,5,6,7,8,9\n"))
	data, err := os.ReadFile(filepath.Join("mappings", "broad-imu-mocap.toml"))
	if err != nil {
		f.Fatal(err)
	}
	m, err := ParseMapping("broad.toml", data)
	if err != nil {
		f.Fatal(err)
	}
	fm := &m.files[0]
	f.Fuzz(func(t *testing.T, text []byte) {
		var e errs
		s, err := readCSV("imu.csv", bytes.NewReader(text), int64(len(text)), fm, &e)
		if err != nil {
			checkLoad(t, nil, err)
			return
		}
		rec, err := finish("imu.csv", Meta{Dataset: "d"}, []*stream{s}, false, 0, &e)
		checkLoad(t, rec, err)
	})
}

// FuzzASL reads arbitrary text as the imu0/data.csv of the ASL layout.
func FuzzASL(f *testing.F) {
	for _, p := range []string{"imu0/data.csv", "state_groundtruth_estimate0/data.csv"} {
		b, err := os.ReadFile(filepath.Join("testdata", "asl", "MH_constructed", "mav0", filepath.FromSlash(p)))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	m, err := ParseMapping("asl", []byte(aslMapping))
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, text []byte) {
		var e errs
		s, err := readCSV("data.csv", bytes.NewReader(text), 0, &m.files[0], &e)
		if err != nil {
			checkLoad(t, nil, err)
			return
		}
		rec, err := finish("data.csv", Meta{Dataset: "asl"}, []*stream{s}, true, 0, &e)
		checkLoad(t, rec, err)
	})
}

// FuzzSmartphone reads arbitrary text as a smartphone trace.
func FuzzSmartphone(f *testing.F) {
	seedLines(f, "smartphone-imu-waypoints-ilc20", "5dda68e89191710006b574b3.txt", 40)
	f.Add([]byte("#\tstartTime:1000\n1020\tTYPE_GYROSCOPE\t0.1\t0.2\t0.3\t3\n1010\tTYPE_WAYPOINT\t1\t2\n1010\tTYPE_ROTATION_VECTOR\t0.5\t0.5\t0.9\t3\n"))
	f.Fuzz(func(t *testing.T, text []byte) {
		rec, err := readSmartphone("trace.txt", "trace", bytes.NewReader(text))
		checkLoad(t, rec, err)
	})
}

// FuzzMapping parses arbitrary TOML as a mapping: errors carry a line
// unless the key is missing, and a mapping accepted has files and columns.
func FuzzMapping(f *testing.F) {
	if b, err := os.ReadFile(filepath.Join("mappings", "broad-imu-mocap.toml")); err == nil {
		f.Add(b)
	}
	f.Add([]byte(aslMapping))
	f.Add([]byte(droneMapping))
	f.Fuzz(func(t *testing.T, text []byte) {
		m, err := ParseMapping("m.toml", text)
		if err != nil {
			var list ErrorList
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error %T: %v", err, err)
			}
			for _, e := range list {
				if e.Line < 1 && !strings.HasPrefix(e.Msg, "missing") {
					t.Fatalf("error without a line: %v", e)
				}
			}
			return
		}
		if len(m.files) == 0 {
			t.Fatal("mapping without files accepted")
		}
		for _, fm := range m.files {
			if len(fm.outs) == 0 || fm.perUnit == 0 || fm.time == "" {
				t.Fatalf("incomplete file mapping accepted: %+v", fm)
			}
		}
	})
}
