package recorded

import (
	"math"
	"strings"
	"testing"
	"time"

	"github.com/estbench/estbench/datasets/navlog"
)

// A harbour launch's GNSS fixes (made up): out of order, one time twice,
// no heading, altitude only on some points.
func TestFromTrack(t *testing.T) {
	t0 := time.Date(2024, 5, 1, 6, 0, 0, 0, time.UTC)
	nan := math.NaN()
	const lat0, lon0 = 53.5, 9.9
	pts := []navlog.Point{
		{T: t0.Add(2 * time.Second), Lat: lat0 + 0.001, Lon: lon0, Alt: nan, SOG: 2, COG: 90, Heading: nan, HorizStd: 1.5},
		{T: t0, Lat: lat0, Lon: lon0, Alt: 0, SOG: nan, COG: nan, Heading: nan, HorizStd: nan},
		{T: t0.Add(2 * time.Second), Lat: 0, Lon: 0, Alt: nan, SOG: nan, COG: nan, Heading: nan, HorizStd: nan},
		{T: t0.Add(500 * time.Millisecond), Lat: lat0, Lon: lon0, Alt: 3, SOG: 1, COG: 0, Heading: nan, HorizStd: nan},
	}
	rec, err := FromTrack(navlog.Track{Source: "launch.nmea", ID: "GP", Part: 2, Points: pts}, "harbour", "gnss")
	if err != nil {
		t.Fatal(err)
	}
	if !equalBits(rec.T, []float64{0, 0.5, 2}) || !rec.Meta.Start.Equal(t0) || rec.Meta.Sequence != "GP-part2" || rec.Meta.Skipped["points at a repeated time"] != 1 {
		t.Fatalf("T %v, meta %+v", rec.T, rec.Meta)
	}
	var names []string
	for _, c := range rec.Columns {
		names = append(names, c.Name)
	}
	if got := strings.Join(names, " "); got != "lat lon alt pos_x pos_y pos_z vel_x vel_y sog cog horiz_std" {
		t.Errorf("columns %s (heading is never given, so left out)", got)
	}
	py := rec.Column("pos_y")
	if py.Frame != "enu@53.5,9.9,0" || py.Unit != "m" || py.Values[0] != 0 || rec.Column("pos_x").Values[0] != 0 {
		t.Errorf("pos_y %+v", *py)
	}
	// 0.001 degrees north is M * 0.001 * pi/180 metres, M = a(1-e²)/(1-e²
	// sin²φ)^(3/2) the meridian radius of curvature of the WGS-84 ellipsoid
	// (a = 6378137 m, 1/f = 298.257223563; NIMA TR8350.2, 2000); the
	// arc's curvature changes it by under a millimetre.
	const a, f = 6378137.0, 1 / 298.257223563
	e2 := f * (2 - f)
	phi := (lat0 + 0.0005) * math.Pi / 180
	m := a * (1 - e2) / math.Pow(1-e2*math.Sin(phi)*math.Sin(phi), 1.5)
	if want := m * 0.001 * math.Pi / 180; math.Abs(py.Values[2]-want) > 1e-3 {
		t.Errorf("north %v m, want %v", py.Values[2], want)
	}
	// Velocity east/north from speed and course: 2 m/s at 90 degrees.
	vx, vy := rec.Column("vel_x"), rec.Column("vel_y")
	if vx.Has(0) || math.Abs(vx.Values[2]-2) > 1e-15 || math.Abs(vy.Values[2]) > 1e-15 || vy.Values[1] != 1 {
		t.Errorf("velocity %v %v", vx.Values, vy.Values)
	}
	if alt := rec.Column("alt"); alt.Has(2) || alt.Values[1] != 3 {
		t.Errorf("alt %v", alt.Values)
	}
	if s := rec.Meta.Sensors; len(s) != 1 || s[0].Name != "gnss" || s[0].Samples != 3 || s[0].RateHz != 1 {
		t.Errorf("sensors %+v", s)
	}
	if FileName(rec) != "GP-part2.arrow" {
		t.Errorf("file name %s", FileName(rec))
	}
	if _, err := FromTrack(navlog.Track{ID: "x", Points: []navlog.Point{{Lat: 1}}}, "d", "gnss"); err == nil {
		t.Error("a point without time accepted")
	}
}

func TestTimesTooClose(t *testing.T) {
	// 1e17 ns and 1e17+1 ns from the zero of the time base are the same
	// float64 number of seconds (1e8 s needs more than 53 bits at 1 ns).
	m := mustMapping(t, "dataset = \"d\"\n[[file]]\npath = \"a.csv\"\ntime = \"t\"\ntime_unit = \"ns\"\n[[file.quantity]]\nkind = \"gyro\"\ncolumns = [\"g\"]\nunit = \"rad/s\"\nframe = \"body\"\n")
	dir := writeFiles(t, map[string]string{"a.csv": "t,g\n100000000000000000,1\n100000000000000001,2\n100000000000000000,3\n"})
	rec, err := LoadCSV(m, dir)
	list, ok := err.(ErrorList)
	if !ok || len(list) != 2 || list[0].Line != 3 || !strings.Contains(list[0].Msg, "too close to that of line 2") ||
		list[1].Line != 4 || !strings.Contains(list[1].Msg, "duplicate time: line 2 has the same a time") {
		t.Fatalf("err %v", err)
	}
	if rec.Len() != 1 || rec.Column("gyro_x").Values[0] != 1 {
		t.Errorf("%+v", rec)
	}
}
