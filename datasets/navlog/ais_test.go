package navlog

import (
	"bytes"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/estbench/estbench/datasets/geo"
)

func readAllAIS(t *testing.T, name, data string) ([]AISReport, *AISReader) {
	t.Helper()
	r := NewAISReader(strings.NewReader(data), name)
	var reps []AISReport
	for r.Scan() {
		reps = append(reps, *r.Report())
	}
	if err := r.Err(); err != nil {
		t.Fatal(err)
	}
	return reps, r
}

// The 6-bit armouring table of ITU-R M.1371-5 Annex 8 (from memory):
// '0'..'W' are 0..39 and '`'..'w' are 40..63.
func TestDearmour(t *testing.T) {
	got := dearmour(nil, []byte("0W`w19AQ"))
	want := []byte{0, 39, 40, 63, 1, 9, 17, 33}
	if !bytes.Equal(got, want) {
		t.Errorf("dearmour = %v, want %v", got, want)
	}
	if armoured([]byte("X")) || armoured([]byte("_")) || armoured([]byte("x")) || !armoured([]byte("0Ww`")) {
		t.Error("armoured accepts a character outside the table or rejects one inside")
	}
}

// Published example sentences with their decoded values, all quoted from
// memory (each sentence's checksum matches, so the sentence at least is
// recalled exactly):
//   - the worked example of the gpsd project's "AIVDM/AIVDO protocol
//     decoding" document (E. S. Raymond), a type 1 report: MMSI
//     477553000, moored, SOG 0, lon -122.345833, lat 47.582833, course
//     51, heading 181, second 15;
//   - a type 1 report from the same document's sample data: MMSI
//     366053209, restricted manoeuvrability (3), lon -122.341618, lat
//     37.802118, course 219.3, heading 1, second 59;
//   - the README example of the pyais decoder: MMSI 371798000, under way
//     (0), 12.3 kn, high accuracy, lon -123.395383, lat 48.38163, course
//     224, heading 215, second 33;
//   - a type 18 Class B report from gpsd's sample data: MMSI 338087471,
//     0.1 kn, lon -74.072132, lat 40.684540, course 79.6, heading 511 (not
//     available), second 49.
func TestAISPublishedExamples(t *testing.T) {
	in := "!AIVDM,1,1,,B,177KQJ5000G?tO`K>RA1wUbN0TKH,0*5C\n" +
		"!AIVDM,1,1,,B,15M67FC000G?ufbE`FepT@3n00Sa,0*5C\n" +
		"!AIVDM,1,1,,A,15RTgt0PAso;90TKcjM8h6g208CQ,0*4A\n" +
		"!AIVDM,1,1,,A,B52K>;h00Fc>jpUlNV@ikwpUoP06,0*4C\n"
	reps, r := readAllAIS(t, "examples", in)
	nan := math.NaN()
	want := []AISReport{
		{Type: 1, MMSI: 477553000, Status: 5, SOG: 0, Lon: -122.345833, Lat: 47.582833, COG: 51, Heading: 181, Second: 15, Channel: 'B'},
		{Type: 1, MMSI: 366053209, Status: 3, SOG: 0, Lon: -122.341618, Lat: 37.802118, COG: 219.3, Heading: 1, Second: 59, Channel: 'B'},
		{Type: 1, MMSI: 371798000, Status: 0, SOG: 12.3, Accurate: true, Lon: -123.395383, Lat: 48.38163, COG: 224, Heading: 215, Second: 33, Channel: 'A'},
		{Type: 18, MMSI: 338087471, Status: -1, SOG: 0.1, Lon: -74.072132, Lat: 40.684540, COG: 79.6, Heading: nan, Second: 49, Channel: 'A'},
	}
	if len(reps) != len(want) || r.NumIssues() != 0 {
		t.Fatalf("%d reports, issues %v", len(reps), r.Issues())
	}
	for i, w := range want {
		g := reps[i]
		// Published positions are rounded to 1e-6 degree (1e-5 for one).
		if g.Type != w.Type || g.MMSI != w.MMSI || g.Status != w.Status || g.SOG != w.SOG || g.Accurate != w.Accurate ||
			math.Abs(g.Lon-w.Lon) > 5e-7 || math.Abs(g.Lat-w.Lat) > 5e-6 || g.COG != w.COG ||
			!same(g.Heading, w.Heading) || g.Second != w.Second || g.Channel != w.Channel || g.Timed {
			t.Errorf("report %d: %+v\nwant %+v", i, g, w)
		}
	}
}

// bitWriter packs fields most significant bit first and armours them,
// following the field tables of ITU-R M.1371-5 (as laid out in the gpsd
// AIVDM document, from memory), independently of the decoder.
type bitWriter struct{ bits []byte }

func (w *bitWriter) put(v int64, n int) {
	for i := n - 1; i >= 0; i-- {
		w.bits = append(w.bits, byte(v>>i)&1)
	}
}

func (w *bitWriter) text(s string, n int) {
	for i := range n {
		c := byte('@')
		if i < len(s) {
			c = s[i]
		}
		w.put(int64(c&63), 6)
	}
}

// payload returns the armoured payload and its fill bits.
func (w *bitWriter) payload() (string, int) {
	fill := (6 - len(w.bits)%6) % 6
	b := append([]byte(nil), w.bits...)
	for range fill {
		b = append(b, 0)
	}
	var s []byte
	for i := 0; i < len(b); i += 6 {
		v := b[i]<<5 | b[i+1]<<4 | b[i+2]<<3 | b[i+3]<<2 | b[i+4]<<1 | b[i+5]
		if v < 40 {
			s = append(s, v+48)
		} else {
			s = append(s, v+56)
		}
	}
	return string(s), fill
}

// A hand-encoded type 19 (extended Class B) report, 312 bits: the decoder
// must find each field at its place and the name.
func TestAISType19HandEncoded(t *testing.T) {
	var w bitWriter
	w.put(19, 6)              // type
	w.put(1, 2)               // repeat
	w.put(244123456, 30)      // MMSI
	w.put(0, 8)               // regional reserved
	w.put(57, 10)             // SOG 5.7 kn
	w.put(1, 1)               // accuracy
	w.put(-(4*60+30)*1e4, 28) // lon -4°30' = -4.5
	w.put((51*60+6)*1e4, 27)  // lat 51°06' = 51.1
	w.put(3599, 12)           // COG 359.9
	w.put(511, 9)             // heading n/a
	w.put(60, 6)              // second n/a
	w.put(0, 4)               // regional reserved
	w.text("SURVEY LAUNCH", 20)
	w.put(37, 8) // ship type
	w.put(0, 30) // dimensions
	w.put(1, 4)  // EPFD
	w.put(0, 7)  // RAIM, DTE, assigned (1 bit each), spare (4)
	p, fill := w.payload()
	if len(w.bits) != 312 {
		t.Fatalf("%d bits", len(w.bits))
	}
	// A 52-character payload: split over two sentences.
	in := withChecksum('!', "AIVDM,2,1,7,A,"+p[:30]+",0") + "\n" +
		withChecksum('!', "AIVDM,2,2,7,A,"+p[30:]+","+string(rune('0'+fill))) + "\n"
	reps, r := readAllAIS(t, "t19", in)
	if len(reps) != 1 {
		t.Fatalf("%d reports, issues %v", len(reps), r.Issues())
	}
	g := reps[0]
	if g.Type != 19 || g.Repeat != 1 || g.MMSI != 244123456 || g.SOG != 5.7 || !g.Accurate ||
		math.Abs(g.Lon+4.5) > 1e-12 || math.Abs(g.Lat-51.1) > 1e-12 || g.COG != 359.9 ||
		!math.IsNaN(g.Heading) || g.Second != 60 || g.Line != 2 {
		t.Errorf("type 19: %+v", g)
	}
	if n := r.Names()[244123456]; n != "SURVEY LAUNCH" {
		t.Errorf("name %q", n)
	}
}

// Not-available codes: SOG 1023, lon 181°, lat 91°, COG 3600, heading 511.
func TestAISNotAvailable(t *testing.T) {
	var w bitWriter
	w.put(3, 6)
	w.put(0, 2)
	w.put(123456789, 30)
	w.put(15, 4)          // status undefined
	w.put(-128, 8)        // ROT n/a
	w.put(1023, 10)       // SOG n/a
	w.put(0, 1)           // accuracy
	w.put(181*600000, 28) // lon n/a
	w.put(91*600000, 27)  // lat n/a
	w.put(3600, 12)       // COG n/a
	w.put(511, 9)         // heading n/a
	w.put(62, 6)          // second: dead reckoning
	w.put(0, 168-143)     // the rest
	p, fill := w.payload()
	reps, r := readAllAIS(t, "na", withChecksum('!', "AIVDO,1,1,,,"+p+","+string(rune('0'+fill)))+"\n")
	if len(reps) != 1 {
		t.Fatalf("issues %v", r.Issues())
	}
	g := reps[0]
	if !math.IsNaN(g.SOG) || !math.IsNaN(g.Lon) || !math.IsNaN(g.Lat) || !math.IsNaN(g.COG) || !math.IsNaN(g.Heading) ||
		g.Status != 15 || g.Second != 62 || !g.Own || g.Channel != 0 {
		t.Errorf("%+v", g)
	}
	tracks, st, _ := ReadAISTracks(strings.NewReader(withChecksum('!', "AIVDO,1,1,,,"+p+","+string(rune('0'+fill)))+"\n"), "na", TrackConfig{})
	if len(tracks) != 0 || st.Reports != 0 {
		t.Errorf("a report without position made %d tracks", len(tracks))
	}
}

// Fragments: a second fragment without its first, a first fragment
// never completed, interleaved messages on two channels, a bad checksum.
func TestAISReassembly(t *testing.T) {
	// The two-sentence type 5 message that opens ais-nmea.log (a real one).
	f1 := "!AIVDM,2,1,9,B,55R3Vn82=ILTQ3KKS>1<D60Dq@E918U<F222221J1`?164vc03S1CCAD,0*2A"
	f2 := "!AIVDM,2,2,9,B,`88888888888880,2*76"
	single := "!AIVDM,1,1,,B,13aDp<PP000IwSlN?Wm@0?wN2<1T,0*29"
	in := strings.Join([]string{
		f2, // orphan second fragment
		f1, // started ...
		strings.Replace(f1, ",9,B,", ",9,A,", 1)[:len(f1)-2] + "XX", // same id on channel A, bad checksum text
		single, // a single-sentence message in between
		f2,     // completes the channel-B message
		f1,     // never completed
	}, "\n")
	reps, r := readAllAIS(t, "frag", in)
	st := r.Stats()
	if len(reps) != 1 || st.Messages != 2 || st.ByType[5] != 1 || st.ByType[1] != 1 || st.Incomplete != 2 || st.NoChecksum != 1 {
		t.Errorf("reports %d, stats %+v, issues %v", len(reps), st, r.Issues())
	}
	if n := r.Names()[reps[0].MMSI]; n != "" {
		t.Errorf("type 1 vessel has name %q", n)
	}
	if len(r.Names()) != 1 {
		t.Errorf("names %v", r.Names())
	}
	if iss := r.Issues(); len(iss) < 1 || iss[0].Error() != "frag:1: AIVDM: fragment 2 of 2 without the ones before it" {
		t.Errorf("issues %v", iss)
	}
}

// The real AIS capture. SOURCE.md counts 183 !AIVDM sentences (171
// single or first fragments + 12 second fragments), message types 1
// (116), 3 (21), 5 (12), 24 (9), 18 (7), 8 (6), from 33 distinct MMSIs,
// received at 52.84N 5.71E on 2020-04-07 between 21:39:50 and 21:42:33.
func TestAISSharedLog(t *testing.T) {
	data := string(sharedFile(t, "nmea-gpsd-logs", "ais-nmea.log"))
	reps, r := readAllAIS(t, "ais-nmea.log", data)
	st := r.Stats()
	if st.Sentences != 183 || st.Messages != 171 || st.Incomplete != 0 || st.Vessels != 33 ||
		st.BadChecksum != 0 || st.BadField != 0 || r.NumIssues() != 0 {
		t.Errorf("stats %+v, issues %v", st, r.Issues())
	}
	wantTypes := map[int]int{1: 116, 3: 21, 5: 12, 24: 9, 18: 7, 8: 6}
	for typ, n := range st.ByType {
		if n != wantTypes[typ] {
			t.Errorf("type %d: %d messages, want %d", typ, n, wantTypes[typ])
		}
	}
	if len(reps) != 116+21+7 || st.Reports != len(reps) {
		t.Errorf("%d position reports, want 144", len(reps))
	}
	rx := geo.NewFrame(geo.Geodetic{Lat: 52.84, Lon: 5.71})
	t0, t1 := utc("2020-04-07T21:39:50"), utc("2020-04-07T21:42:33")
	withPos := 0
	for _, p := range reps {
		if p.MMSI < 100000000 || p.MMSI > 999999999 {
			t.Errorf("MMSI %d is not 9 digits", p.MMSI)
		}
		// The report's time lies within ±30 s of a receiver time, hence
		// within the receiver's span widened by that much.
		if !p.Timed || p.T.Before(t0.Add(-31*time.Second)) || p.T.After(t1.Add(31*time.Second)) {
			t.Errorf("report at line %d timed %v at %v", p.Line, p.Timed, p.T)
		}
		if math.IsNaN(p.Lat) || math.IsNaN(p.Lon) {
			// One moored vessel reports no position, SOG or course, with
			// time stamp 63: positioning system inoperative (ITU-R
			// M.1371-5, time stamp field of message 1: 60 not available,
			// 61 manual, 62 dead reckoning, 63 inoperative; from memory).
			if p.MMSI != 244060797 || p.Second != 63 || !math.IsNaN(p.SOG) {
				t.Errorf("report without position: %+v", p)
			}
			continue
		}
		withPos++
		// VHF AIS reaches a few tens of kilometres from a low antenna
		// (common practice, no source); 60 km bounds it.
		e := rx.ENU(geo.Geodetic{Lat: p.Lat, Lon: p.Lon})
		if d := math.Hypot(e[0], e[1]); d > 60e3 {
			t.Errorf("MMSI %d at %.5f %.5f, %.0f km from the receiver", p.MMSI, p.Lat, p.Lon, d/1e3)
		}
	}
	if withPos != 141 {
		t.Errorf("%d reports with a position, want 141 (3 of 144 have none)", withPos)
	}
	for mmsi, n := range r.Names() {
		if n != strings.ToUpper(n) || strings.ContainsAny(n, "@") || len(n) > 20 {
			t.Errorf("MMSI %d name %q is not AIS text", mmsi, n)
		}
	}
	if len(r.Names()) < 10 {
		t.Errorf("%d names from 21 static messages", len(r.Names()))
	}

	tracks, ts, _ := ReadAISTracks(strings.NewReader(data), "ais-nmea.log", TrackConfig{})
	if ts.Reports != withPos || ts.Vessels != len(tracks) || ts.Duplicates != 0 {
		t.Errorf("track stats %+v, %d tracks", ts, len(tracks))
	}
	for _, tr := range tracks {
		for i := 1; i < len(tr.Points); i++ {
			if tr.Points[i].T.Before(tr.Points[i-1].T) {
				t.Errorf("track %s not in time order", tr.ID)
			}
		}
	}
}

// The same report received twice (say on both channels) is one point.
func TestAISDuplicates(t *testing.T) {
	rmc := withChecksum('$', "GPRMC,213950.00,A,5250.53669,N,00542.34920,E,0.020,,070420,,,A") + "\n"
	a := "!AIVDM,1,1,,A,15RTgt0PAso;90TKcjM8h6g208CQ,0*4A\n"
	b := "!AIVDM,1,1,,B,15RTgt0PAso;90TKcjM8h6g208CQ,0*49\n"
	tracks, st, r := ReadAISTracks(strings.NewReader(rmc+a+b), "dup", TrackConfig{})
	if r.NumIssues() != 0 || len(tracks) != 1 || len(tracks[0].Points) != 1 || st.Duplicates != 1 {
		t.Fatalf("tracks %+v, stats %+v, issues %v", tracks, st, r.Issues())
	}
	// Second 33 is 17 s before the receiver's 21:39:50.
	if p := tracks[0].Points[0]; !p.T.Equal(utc("2020-04-07T21:39:33")) || math.Abs(p.SOG-12.3*1852/3600) > 1e-15 {
		t.Errorf("point %+v", p)
	}
}
