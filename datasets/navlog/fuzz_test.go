package navlog

import (
	"bytes"
	"math"
	"testing"
)

// The fuzz targets feed arbitrary bytes to each reader: it must never
// panic, must end, and must keep its records within their documented
// ranges.

func FuzzNMEA(f *testing.F) {
	for _, s := range fuzzSeeds("nmea-gpsd-logs", "ais-nmea.log", "bundg_zeus_9.log", "haicom-305N.log", "nmea-rtk.log") {
		f.Add(s)
	}
	f.Add([]byte(withChecksum('$', "GPGGA,235959.99,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") + "\n" +
		withChecksum('$', "GPGST,000000,1,2,3,4,5,6,7") + "\n" + withChecksum('$', "HEHDT,359.9,T") + "\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		r := NewNMEAReader(bytes.NewReader(data), "fuzz", NMEAConfig{})
		n := 0
		for r.Scan() {
			fx := r.Fix()
			if math.Abs(fx.Lat) > 90 || math.Abs(fx.Lon) > 180 || fx.COG < 0 || fx.COG >= 360 || fx.Heading < 0 || fx.Heading >= 360 {
				t.Fatalf("fix out of range: %+v", fx)
			}
			n++
		}
		if st := r.Stats(); st.Fixes != n || r.Err() != nil {
			t.Fatalf("fixes %d, stats %+v, err %v", n, st, r.Err())
		}
		tr, _ := ReadNMEATrack(bytes.NewReader(data), "fuzz", NMEAConfig{})
		if len(tr.Points) > 0 {
			tr.ToENU(nil)
		}
	})
}

func FuzzAIS(f *testing.F) {
	for _, s := range fuzzSeeds("nmea-gpsd-logs", "ais-nmea.log") {
		f.Add(s)
	}
	f.Add([]byte("!AIVDM,1,1,,B,177KQJ5000G?tO`K>RA1wUbN0TKH,0*5C\n!AIVDM,1,1,,A,B52K>;h00Fc>jpUlNV@ikwpUoP06,0*4C\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		r := NewAISReader(bytes.NewReader(data), "fuzz")
		for r.Scan() {
			p := r.Report()
			if math.Abs(p.Lat) > 90 || math.Abs(p.Lon) > 180 || p.SOG > 102.2 || p.COG >= 360 || p.Heading >= 360 ||
				p.MMSI >= 1<<30 || p.Second > 63 {
				t.Fatalf("report out of range: %+v", p)
			}
		}
		if r.Err() != nil {
			t.Fatal(r.Err())
		}
		tracks, _, _ := ReadAISTracks(bytes.NewReader(data), "fuzz", TrackConfig{})
		for i := range tracks {
			tracks[i].ToENU(nil)
		}
	})
}

func FuzzGPX(f *testing.F) {
	for _, s := range fuzzSeeds("gpx-gpxpy-tracks", "cerknicko-jezero.gpx", "around-visnjan-with-car.gpx") {
		f.Add(s)
	}
	f.Add([]byte(`<gpx version="1.0" xmlns="http://www.topografix.com/GPX/1/0"><trk><name>a</name><trkseg>` +
		`<trkpt lat="1" lon="2"><ele>3</ele><time>2001-02-03T04:05:06Z</time><speed>1</speed><course>2</course></trkpt></trkseg></trk></gpx>`))
	f.Fuzz(func(t *testing.T, data []byte) {
		tracks, r := ReadGPXTracks(bytes.NewReader(data), "fuzz")
		for i := range tracks {
			for _, p := range tracks[i].Points {
				if math.Abs(p.Lat) > 90 || math.Abs(p.Lon) > 180 || p.COG >= 360 || p.SOG < 0 {
					t.Fatalf("point out of range: %+v", p)
				}
			}
			tracks[i].ToENU(nil)
		}
		_ = r.Err()
	})
}

func FuzzAISCSV(f *testing.F) {
	for _, s := range fuzzSeeds("ais-marinecadastre-nyharbor", nyFile) {
		// every piece after the first needs the header
		if i := bytes.IndexByte(s, '\n'); !bytes.HasPrefix(s, []byte("MMSI,")) && i >= 0 {
			s = s[i+1:] // drop the partial first line
		}
		if !bytes.HasPrefix(s, []byte("MMSI,")) {
			s = append([]byte("MMSI,BaseDateTime,LAT,LON,SOG,COG,Heading,VesselName,IMO,CallSign,VesselType,Status,Length,Width,Draft,Cargo,TransceiverClass\n"), s...)
		}
		f.Add(s)
	}
	f.Add([]byte("LON,LAT,MMSI,BaseDateTime,VesselName\n1,2,3,2022-01-03T00:00:00Z,\"a,\"\"b\"\"\"\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		r := NewAISCSVReader(bytes.NewReader(data), "fuzz")
		for r.Scan() {
			row := r.Row()
			if math.Abs(row.Lat) > 90 || math.Abs(row.Lon) > 180 || row.COG >= 360 || row.Heading >= 360 || row.SOG > 102.2 {
				t.Fatalf("row out of range: %+v", row)
			}
		}
		tracks, _, _ := ReadAISCSVTracks(bytes.NewReader(data), "fuzz", TrackConfig{})
		for i := range tracks {
			tracks[i].ToENU(nil)
		}
	})
}
