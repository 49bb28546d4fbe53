package navlog

import (
	"bytes"
	"math"
	"strings"
	"testing"
)

// Both gpxpy sample files; expected numbers from
// ../shared/datasets/gpx-gpxpy-tracks/SOURCE.md.
func TestGPXShared(t *testing.T) {
	cases := []struct {
		file, version string
		counts        []int // points per <trk>, in file order
		waypoints     int
		first, last   string
		latLo, latHi  float64
		lonLo, lonHi  float64
	}{
		// 8 tracks "ACTIVE LOG".."#8", the first empty, then 173, 52, 2,
		// 44, 2, 2, 21 = 296 points, 2010-08-05T14:23:59Z..16:23:49Z, lat
		// 45.744..45.792, lon 14.304..14.367; 7 waypoints.
		{"cerknicko-jezero.gpx", "1.0", []int{0, 173, 52, 2, 44, 2, 2, 21}, 7,
			"2010-08-05T14:23:59", "2010-08-05T16:23:49", 45.744, 45.792, 14.304, 14.367},
		// 1 track, 1 segment, 104 points 2020-12-18T06:15:50Z..06:24:24Z,
		// lat 45.272..45.281, lon 13.712..13.722; the file is one line.
		{"around-visnjan-with-car.gpx", "1.1", []int{104}, 0,
			"2020-12-18T06:15:50", "2020-12-18T06:24:24", 45.272, 45.281, 13.712, 13.722},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			data := sharedFile(t, "gpx-gpxpy-tracks", c.file)
			r := NewGPXReader(bytes.NewReader(data), c.file)
			var counts []int
			var pts []Point
			for r.Scan() {
				tr := r.Track()
				n := 0
				for _, s := range tr.Segments {
					n += len(s)
					pts = append(pts, s...)
				}
				counts = append(counts, n)
			}
			if err := r.Err(); err != nil {
				t.Fatal(err)
			}
			st := r.Stats()
			if st.Version != c.version || st.Waypoints != c.waypoints || st.BadPoints != 0 || r.NumIssues() != 0 ||
				st.Tracks != len(c.counts) || st.Segments != len(c.counts) {
				t.Errorf("stats %+v, issues %v", st, r.Issues())
			}
			if len(counts) != len(c.counts) {
				t.Fatalf("points per track %v, want %v", counts, c.counts)
			}
			total := 0
			for i := range counts {
				total += c.counts[i]
				if counts[i] != c.counts[i] {
					t.Errorf("points per track %v, want %v", counts, c.counts)
					break
				}
			}
			if st.Points != total {
				t.Errorf("%d points, want %d", st.Points, total)
			}
			if !pts[0].T.Equal(utc(c.first)) || !pts[len(pts)-1].T.Equal(utc(c.last)) {
				t.Errorf("points from %v to %v", pts[0].T, pts[len(pts)-1].T)
			}
			// SOURCE.md gives the ranges to 3 decimals: allow half a unit.
			for _, p := range pts {
				if p.Lat < c.latLo-5e-4 || p.Lat > c.latHi+5e-4 || p.Lon < c.lonLo-5e-4 || p.Lon > c.lonHi+5e-4 ||
					math.IsNaN(p.Alt) || p.T.IsZero() || !math.IsNaN(p.SOG) {
					t.Errorf("point %+v outside the file's ranges or lacks ele/time", p)
					break
				}
			}

			tracks, _ := ReadGPXTracks(bytes.NewReader(data), c.file)
			nonEmpty := 0
			for _, n := range c.counts {
				if n > 0 {
					nonEmpty++
				}
			}
			if len(tracks) != nonEmpty {
				t.Errorf("%d tracks, want %d non-empty", len(tracks), nonEmpty)
			}
		})
	}
}

// The first point of each file, as written in it.
func TestGPXSharedFirstPoint(t *testing.T) {
	data := sharedFile(t, "gpx-gpxpy-tracks", "around-visnjan-with-car.gpx")
	tracks, _ := ReadGPXTracks(bytes.NewReader(data), "v")
	// <trkpt lat="45.2735188510" lon="13.7142099626"><ele>211.15</ele><time>2020-12-18T06:15:50Z</time>
	p := tracks[0].Points[0]
	if p.Lat != 45.2735188510 || p.Lon != 13.7142099626 || p.Alt != 211.15 || tracks[0].ID != "2020-12-18 07:24:29" {
		t.Errorf("first point %+v of %q", p, tracks[0].ID)
	}
}

// GPX 1.0 speed and course, extensions in another namespace (skipped
// even where their local names match), a bad latitude reported with its
// line, an unnamed track with two segments.
func TestGPXHandWritten(t *testing.T) {
	in := `<?xml version="1.0"?>
<gpx version="1.0" xmlns="http://www.topografix.com/GPX/1/0" xmlns:x="urn:other">
<trk>
<trkseg>
<trkpt lat="10.5" lon="-20.25"><ele>3</ele><time>2001-02-03T04:05:06.5Z</time><speed>2.5</speed><course>90</course><x:ele>99</x:ele></trkpt>
<trkpt lat="91" lon="0"><time>2001-02-03T04:05:07Z</time></trkpt>
</trkseg>
<x:trkseg><trkpt lat="1" lon="1"/></x:trkseg>
<trkseg><trkpt lat="10.6" lon="-20.3"><time>2001-02-03T04:05:08</time></trkpt></trkseg>
</trk>
</gpx>`
	tracks, r := ReadGPXTracks(strings.NewReader(in), "h.gpx")
	if r.Err() != nil || len(tracks) != 2 {
		t.Fatalf("tracks %+v, err %v", tracks, r.Err())
	}
	p := tracks[0].Points[0]
	if len(tracks[0].Points) != 1 || p.Alt != 3 || p.SOG != 2.5 || p.COG != 90 || !p.T.Equal(utc("2001-02-03T04:05:06.5")) {
		t.Errorf("first point %+v", p)
	}
	if tracks[0].ID != "track 1" || tracks[1].Part != 2 || !tracks[1].Points[0].T.Equal(utc("2001-02-03T04:05:08")) ||
		!math.IsNaN(tracks[1].Points[0].Alt) {
		t.Errorf("tracks %+v", tracks)
	}
	if iss := r.Issues(); len(iss) != 1 || iss[0].Error() != `h.gpx:6: trkpt lat: bad value "91"` {
		t.Errorf("issues %v", iss)
	}
	if st := r.Stats(); st.BadPoints != 1 || st.Points != 2 || st.Segments != 2 {
		t.Errorf("stats %+v", st)
	}
}

func TestGPXBroken(t *testing.T) {
	cases := []struct{ in, err string }{
		{"<gpx version=\"1.1\" xmlns=\"http://www.topografix.com/GPX/1/1\">\n<trk><trkseg>\n<trkpt lat=\"1\" lon=\"2\"></trkseg>", "b.gpx:3: xml: element <trkpt> closed by </trkseg>"},
		{"<kml></kml>", "b.gpx:1: root element is <kml>, not <gpx>"},
		{"", "b.gpx: no <gpx> element"},
	}
	for _, c := range cases {
		tracks, r := ReadGPXTracks(strings.NewReader(c.in), "b.gpx")
		if r.Err() == nil || r.Err().Error() != c.err || len(tracks) != 0 {
			t.Errorf("%q: err %v, want %s", c.in, r.Err(), c.err)
		}
	}
}
