package navlog

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"
)

const nyFile = "ais_2022-01-03_nyharbor_0000-0025Z.csv"

// The MarineCadastre extract. SOURCE.md: 2,892 rows, 218 distinct MMSI,
// BaseDateTime 00:00:00..00:24:55 on 2022-01-03, inside 40.4 < LAT < 40.9
// and -74.3 < LON < -73.7; Heading 511 in 916 rows, COG 360 in 305 rows,
// no SOG 102.3; 85 Class B rows, all with empty Status; no two rows share
// (MMSI, BaseDateTime); not time-sorted.
func TestAISCSVShared(t *testing.T) {
	data := sharedFile(t, "ais-marinecadastre-nyharbor", nyFile)
	r := NewAISCSVReader(bytes.NewReader(data), nyFile)
	var rows, noHdg, noCOG, classB, classBStatus, backward int
	var prev time.Time
	t0, t1 := utc("2022-01-03T00:00:00"), utc("2022-01-03T00:24:55")
	for r.Scan() {
		row := r.Row()
		rows++
		if math.IsNaN(row.Heading) {
			noHdg++
		}
		if math.IsNaN(row.COG) {
			noCOG++
		}
		if math.IsNaN(row.SOG) {
			t.Errorf("line %d: SOG missing", row.Line)
		}
		if row.Class == 'B' {
			classB++
			if row.Status >= 0 {
				classBStatus++
			}
		}
		if row.T.Before(prev) {
			backward++
		}
		prev = row.T
		if row.T.Before(t0) || row.T.After(t1) || row.Lat <= 40.4 || row.Lat >= 40.9 || row.Lon <= -74.3 || row.Lon >= -73.7 ||
			row.MMSI < 100000000 || row.MMSI > 999999999 {
			t.Errorf("line %d outside the extract's window: %+v", row.Line, row)
		}
	}
	if r.Err() != nil || r.NumIssues() != 0 {
		t.Fatalf("err %v, issues %v", r.Err(), r.Issues())
	}
	if rows != 2892 || noHdg != 916 || noCOG != 305 || classB != 85 || classBStatus != 0 {
		t.Errorf("rows %d, heading n/a %d, COG n/a %d, class B %d (%d with status)", rows, noHdg, noCOG, classB, classBStatus)
	}
	// SOURCE.md counts 1,311 backward steps in file order.
	if backward != 1311 {
		t.Errorf("%d backward time steps, want 1311", backward)
	}

	tracks, st, _ := ReadAISCSVTracks(bytes.NewReader(data), nyFile, TrackConfig{Gap: -1})
	if st.Vessels != 218 || len(tracks) != 218 || st.Duplicates != 0 || st.Reports != 2892 {
		t.Errorf("unsplit: %d tracks, stats %+v", len(tracks), st)
	}
	n := 0
	for _, tr := range tracks {
		n += len(tr.Points)
		for i := 1; i < len(tr.Points); i++ {
			if !tr.Points[i].T.After(tr.Points[i-1].T) {
				t.Errorf("track %s: points %d and %d not in strict time order", tr.ID, i-1, i)
			}
		}
	}
	if n != 2892 {
		t.Errorf("%d points in tracks", n)
	}
	// The first row: 367694720,2022-01-03T00:00:07,40.64174,-74.19299,0,360,511,JANET D,...
	for _, tr := range tracks {
		if tr.ID == "367694720" && (tr.Name != "JANET D" || tr.Points[0].SOG != 0 || !math.IsNaN(tr.Points[0].COG)) {
			t.Errorf("JANET D track %+v", tr.Points[0])
		}
	}
}

// Splitting at gaps over 10 minutes (the default) and over 5 minutes:
// every split is where a vessel's consecutive reports are that far apart,
// checked against a count made here from the unsplit tracks.
func TestAISCSVSharedGaps(t *testing.T) {
	data := sharedFile(t, "ais-marinecadastre-nyharbor", nyFile)
	whole, _, _ := ReadAISCSVTracks(bytes.NewReader(data), nyFile, TrackConfig{Gap: -1})
	for _, gap := range []time.Duration{0, 5 * time.Minute} {
		want := 0
		g := gap
		if g == 0 {
			g = 10 * time.Minute
		}
		for _, tr := range whole {
			want++
			for i := 1; i < len(tr.Points); i++ {
				if tr.Points[i].T.Sub(tr.Points[i-1].T) > g {
					want++
				}
			}
		}
		tracks, st, _ := ReadAISCSVTracks(bytes.NewReader(data), nyFile, TrackConfig{Gap: gap})
		if len(tracks) != want || st.Tracks != want || want <= 218 {
			t.Errorf("gap %v: %d tracks, want %d", g, len(tracks), want)
		}
		for _, tr := range tracks {
			for i := 1; i < len(tr.Points); i++ {
				if tr.Points[i].T.Sub(tr.Points[i-1].T) > g {
					t.Errorf("gap %v: track %s part %d has a %v gap", g, tr.ID, tr.Part, tr.Points[i].T.Sub(tr.Points[i-1].T))
				}
			}
		}
	}
}

// Hand-written rows: column order from the header, quoting, sentinels,
// exact duplicates dropped (a same-time row with other values kept), bad
// rows reported by line and column.
func TestAISCSVHandWritten(t *testing.T) {
	in := "\xef\xbb\xbfLON,lat,MMSI,BaseDateTime,SOG,COG,Heading,VesselName,Status,TransceiverClass\r\n" +
		"-74.1,40.5,367000001,2022-01-03T00:01:00,102.3,360,511,\"TUG, \"\"ONE\"\"\",0,A\r\n" +
		"-74.1,40.5,367000001,2022-01-03T00:00:00,5,90,91,,,B\r\n" +
		"-74.1,40.5,367000001,2022-01-03T00:01:00,102.3,360,511,\"TUG, \"\"ONE\"\"\",0,A\r\n" + // exact duplicate
		"-74.2,40.5,367000001,2022-01-03T00:01:00,1,360,511,,0,A\r\n" + // same time, other values
		"-74.1,40.5,367000001,2022-01-03T00:20:00,1,10,20,,0,A\r\n" + // 19 minutes later: a new part
		"-74.1,x,367000002,2022-01-03T00:00:00,1,1,1,,0,A\r\n" + // bad LAT
		"-74.1,40.5,367000002,2022-01-03 00:00:00.5Z,400,1,1,,0,A\r\n" + // bad SOG: kept as missing
		"181,91,367000003,2022-01-03T00:00:00,1,1,1,,0,A\r\n" + // position not available
		"-74.1,40.5,367000004,2022-13-03T00:00:00,1,1,1,,0,A\r\n" + // bad month
		"-74.1,40.5,367000004\r\n" // too few fields
	tracks, st, r := ReadAISCSVTracks(strings.NewReader(in), "h.csv", TrackConfig{})
	if r.Err() != nil {
		t.Fatal(r.Err())
	}
	if len(tracks) != 3 || st.Duplicates != 1 || st.Vessels != 2 {
		t.Fatalf("tracks %d, stats %+v", len(tracks), st)
	}
	a := tracks[0]
	if a.ID != "367000001" || a.Name != `TUG, "ONE"` || len(a.Points) != 3 || a.Part != 1 || tracks[1].Part != 2 || len(tracks[1].Points) != 1 {
		t.Fatalf("first track %+v", a)
	}
	if p := a.Points[0]; p.SOG != 5*knot || p.COG != 90 || p.Heading != 91 {
		t.Errorf("point %+v", p)
	}
	if p := a.Points[1]; !math.IsNaN(p.SOG) || !math.IsNaN(p.COG) || !math.IsNaN(p.Heading) || p.Lon != -74.1 {
		t.Errorf("sentinel point %+v", p)
	}
	if p := a.Points[2]; p.Lon != -74.2 {
		t.Errorf("same-time point %+v", p)
	}
	if p := tracks[2].Points[0]; !math.IsNaN(p.SOG) || !p.T.Equal(utc("2022-01-03T00:00:00.5")) {
		t.Errorf("row with bad SOG %+v", p)
	}
	want := []string{
		`h.csv:7: LAT: bad value "x"`,
		`h.csv:8: SOG: bad value "400"`,
		`h.csv:10: BaseDateTime: bad value "2022-13-03T00:00:00"`,
		`h.csv:11: row: 3 fields, header has 10`,
	}
	iss := r.Issues()
	if len(iss) != len(want) {
		t.Fatalf("issues %v", iss)
	}
	for i := range want {
		if iss[i].Error() != want[i] {
			t.Errorf("issue %q, want %q", iss[i].Error(), want[i])
		}
	}
	if s := r.Stats(); s.Rows != 6 || s.BadRows != 3 || s.NoPos != 1 {
		t.Errorf("stats %+v", s)
	}
}

func TestAISCSVHeader(t *testing.T) {
	_, _, r := ReadAISCSVTracks(strings.NewReader("MMSI,LAT,LON\n1,2,3\n"), "h.csv", TrackConfig{})
	if r.Err() == nil || r.Err().Error() != "h.csv:1: header: no BaseDateTime column" {
		t.Errorf("err %v", r.Err())
	}
}

// makeAISCSV writes n rows of 40 vessels in the MarineCadastre layout.
func makeAISCSV(n int) []byte {
	var b bytes.Buffer
	b.WriteString("MMSI,BaseDateTime,LAT,LON,SOG,COG,Heading,VesselName,IMO,CallSign,VesselType,Status,Length,Width,Draft,Cargo,TransceiverClass\n")
	t0 := utc("2022-01-03T00:00:00")
	for i := range n {
		tm := t0.Add(time.Duration(i) * 1500 * time.Millisecond)
		fmt.Fprintf(&b, "%d,%s,%.5f,%.5f,%.1f,%.1f,%d,HARBOUR LAUNCH %d,,WDC%04d,31,0,30,9,,52,A\n",
			367000000+i%40, tm.Format("2006-01-02T15:04:05"), 40.5+float64(i%997)*1e-4, -74.1+float64(i%991)*1e-4,
			float64(i%120)/10, float64(i%3600)/10, i%360, i%40, i%40)
	}
	return b.Bytes()
}

func TestAISCSVNoAllocs(t *testing.T) {
	r := NewAISCSVReader(bytes.NewReader(makeAISCSV(2000)), "gen")
	for range 10 {
		r.Scan()
	}
	n := testing.AllocsPerRun(500, func() {
		if !r.Scan() {
			t.Fatal("ended")
		}
	})
	if n != 0 {
		t.Errorf("%v allocations per row", n)
	}
}

func BenchmarkAISCSV(b *testing.B) {
	data := makeAISCSV(20000)
	b.Run("rows", func(b *testing.B) {
		b.SetBytes(int64(len(data)))
		b.ReportAllocs()
		for b.Loop() {
			r := NewAISCSVReader(bytes.NewReader(data), "gen")
			n := 0
			for r.Scan() {
				n++
			}
			if n != 20000 {
				b.Fatalf("%d rows", n)
			}
		}
	})
	b.Run("tracks", func(b *testing.B) {
		b.SetBytes(int64(len(data)))
		b.ReportAllocs()
		for b.Loop() {
			tracks, _, _ := ReadAISCSVTracks(bytes.NewReader(data), "gen", TrackConfig{})
			if len(tracks) != 40 {
				b.Fatalf("%d tracks", len(tracks))
			}
		}
	})
}
