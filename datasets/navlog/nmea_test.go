package navlog

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"
)

func readAllNMEA(t *testing.T, name string, data []byte, cfg NMEAConfig) ([]Fix, *NMEAReader) {
	t.Helper()
	r := NewNMEAReader(bytes.NewReader(data), name, cfg)
	var fixes []Fix
	for r.Scan() {
		fixes = append(fixes, *r.Fix())
	}
	if err := r.Err(); err != nil {
		t.Fatal(err)
	}
	return fixes, r
}

func utc(s string) time.Time {
	t, err := time.Parse("2006-01-02T15:04:05.999999999", s)
	if err != nil {
		panic(err)
	}
	return t
}

// The four GPSD regression logs. Expected sentence counts, time spans and
// fix counts are those of ../shared/datasets/nmea-gpsd-logs/SOURCE.md,
// which counted them with other tools; fix counts it does not give are
// derived in the comments.
func TestNMEASharedLogs(t *testing.T) {
	cases := []struct {
		file         string
		fixes, noFix int
		counts       map[string]int // sentences with a good checksum, by address
		first, last  string         // UTC of the first and last fix
	}{
		// 164 GPS epochs, 21:39:50..21:42:33 on 070420; 183 !AIVDM lines.
		{"ais-nmea.log", 164, 0, map[string]int{"GPRMC": 164, "GPGGA": 164, "AIVDM": 183},
			"2020-04-07T21:39:50", "2020-04-07T21:42:33"},
		// 138 GGA from 09:47:36, 146 RMC on 200818, 1457 SDHDG. The GGA
		// lag their RMC by one second, so the epochs are the union of
		// both sets of times: 148 distinct (counted with sort -u); the
		// last is an RMC-only epoch at 09:50:03.
		{"bundg_zeus_9.log", 148, 0, map[string]int{"GPGGA": 138, "GPRMC": 146, "SDHDG": 1457, "GPZDA": 154},
			"2018-08-20T09:47:36", "2018-08-20T09:50:03"},
		// 73 GGA 09:52:57.809..09:54:15.787, 74 RMC; the first RMC (a
		// lone epoch) and 5 more epochs have status V / quality 0, so
		// 74 - 6 = 68 fixes.
		{"haicom-305N.log", 68, 6, map[string]int{"GPGGA": 73, "GPRMC": 74},
			"2007-04-08T09:53:04.802", "2007-04-08T09:54:15.787"},
		// 50 GN and 72 GP GGA/RMC pairs, "only 122 fixes in 10.7 min",
		// GGA 13:28:19.60..13:39:01.50.
		{"nmea-rtk.log", 122, 0, map[string]int{"GNGGA": 50, "GNRMC": 50, "GPGGA": 72, "GPRMC": 72},
			"2020-03-18T13:28:19.6", "2020-03-18T13:39:01.5"},
	}
	for _, c := range cases {
		t.Run(c.file, func(t *testing.T) {
			fixes, r := readAllNMEA(t, c.file, sharedFile(t, "nmea-gpsd-logs", c.file), NMEAConfig{})
			st := r.Stats()
			if len(fixes) != c.fixes || st.Fixes != c.fixes || st.NoFix != c.noFix {
				t.Errorf("fixes %d (stats %d), no-fix epochs %d; want %d, %d", len(fixes), st.Fixes, st.NoFix, c.fixes, c.noFix)
			}
			counts := r.Sentences()
			for addr, want := range c.counts {
				if got := counts[addr]; got.OK != want || got.BadChecksum != 0 || got.BadField != 0 {
					t.Errorf("%s: %+v, want %d OK", addr, got, want)
				}
			}
			if r.NumIssues() != 0 || st.Undated != 0 || st.Rollovers != 0 {
				t.Errorf("issues %v, undated %d, rollovers %d", r.Issues(), st.Undated, st.Rollovers)
			}
			if len(fixes) == 0 {
				return
			}
			if f, l := fixes[0].T, fixes[len(fixes)-1].T; !f.Equal(utc(c.first)) || !l.Equal(utc(c.last)) {
				t.Errorf("fixes from %v to %v, want %s to %s", f, l, c.first, c.last)
			}
			for i := 1; i < len(fixes); i++ {
				if !fixes[i].T.After(fixes[i-1].T) {
					t.Errorf("fix %d at %v not after %v", i, fixes[i].T, fixes[i-1].T)
				}
			}
		})
	}
}

// Values of single fixes, converted by hand from the sentences quoted.
func TestNMEASharedValues(t *testing.T) {
	// $GPRMC,213950.00,A,5250.53669,N,00542.34920,E,0.020,,070420,,,A*7D
	// $GPVTG,,T,,M,0.020,N,0.038,K,A*2A
	// $GPGGA,213950.00,5250.53669,N,00542.34920,E,1,09,1.03,-6.0,M,45.8,M,,*7B
	fixes, _ := readAllNMEA(t, "ais-nmea.log", sharedFile(t, "nmea-gpsd-logs", "ais-nmea.log"), NMEAConfig{})
	f := fixes[0]
	if math.Abs(f.Lat-(52+50.53669/60)) > 1e-12 || math.Abs(f.Lon-(5+42.34920/60)) > 1e-12 ||
		f.Alt != -6 || f.GeoidSep != 45.8 || f.Quality != 1 || f.Sats != 9 || f.HDOP != 1.03 ||
		f.SOG != 0.020 || !math.IsNaN(f.COG) || f.Talker != [2]byte{'G', 'P'} {
		t.Errorf("first ais-nmea.log fix %+v", f)
	}

	// nmea-rtk.log: fix quality 2 (DGPS) in 104 GGA and 4 (RTK fixed) in
	// 18 (SOURCE.md). Its first epoch:
	// $GNGGA,132819.60,4134.49795459,N,09345.03431408,W,2,10,0.9,278.161,M,-31.442,M,6.6,0133*6A
	// $GNRMC,132819.60,A,...,0.148,124.888,180320,11.5985,E,D*3F
	fixes, _ = readAllNMEA(t, "nmea-rtk.log", sharedFile(t, "nmea-gpsd-logs", "nmea-rtk.log"), NMEAConfig{})
	q := map[int]int{}
	for _, f := range fixes {
		q[f.Quality]++
	}
	if q[2] != 104 || q[4] != 18 || len(q) != 2 {
		t.Errorf("fix qualities %v, want 104 x 2 and 18 x 4", q)
	}
	f = fixes[0]
	if math.Abs(f.Lat-(41+34.49795459/60)) > 1e-12 || math.Abs(f.Lon+(93+45.03431408/60)) > 1e-12 ||
		f.Alt != 278.161 || f.SOG != 0.148 || f.COG != 124.888 || f.Talker != [2]byte{'G', 'N'} {
		t.Errorf("first nmea-rtk.log fix %+v", f)
	}

	// bundg_zeus_9.log: heading from $SDHDG,229.8,,,1.3,E: magnetic 229.8
	// plus 1.3 east variation is 231.1 true; the last HDG of an epoch
	// counts. Every fix after the first has one.
	fixes, _ = readAllNMEA(t, "bundg_zeus_9.log", sharedFile(t, "nmea-gpsd-logs", "bundg_zeus_9.log"), NMEAConfig{})
	for i, f := range fixes {
		if math.IsNaN(f.Heading) || f.Heading < 200 || f.Heading > 260 {
			t.Errorf("zeus fix %d heading %v outside the log's 223-248° course band ±25°", i, f.Heading)
			break
		}
	}
}

// Corrupted copies of a real log: every 10th GGA sentence gets one digit
// changed and keeps its old checksum. Each must be counted as a checksum
// failure, reported with its line, and its epoch kept from the RMC alone.
func TestNMEAChecksumFailures(t *testing.T) {
	data := sharedFile(t, "nmea-gpsd-logs", "haicom-305N.log")
	lines := strings.Split(string(data), "\n")
	var bad []int
	k := 0
	for i, l := range lines {
		if !strings.HasPrefix(l, "$GPGGA") {
			continue
		}
		if k++; k%10 != 0 {
			continue
		}
		j := strings.IndexAny(l[7:], "123456789") + 7
		lines[i] = l[:j] + string(rune('0'+(l[j]-'0'+1)%10)) + l[j+1:]
		bad = append(bad, i+1)
	}
	fixes, r := readAllNMEA(t, "haicom-305N.log", []byte(strings.Join(lines, "\n")), NMEAConfig{})
	c := r.Sentences()["GPGGA"]
	if c.BadChecksum != len(bad) || c.OK != 73-len(bad) || len(bad) != 7 {
		t.Errorf("GPGGA counts %+v, corrupted %d", c, len(bad))
	}
	if len(fixes) != 68 {
		t.Errorf("%d fixes, want 68 (epochs keep their RMC)", len(fixes))
	}
	iss := r.Issues()
	if len(iss) != len(bad) {
		t.Fatalf("issues %v", iss)
	}
	for i, e := range iss {
		if want := fmt.Sprintf("haicom-305N.log:%d: checksum: does not match the sentence", bad[i]); e.Error() != want {
			t.Errorf("issue %q, want %q", e.Error(), want)
		}
	}
}

// Hand-written sentences (checksums computed by withChecksum) for what
// the logs lack: GST, HDT, the pre-2.0 VTG layout, other talkers, a
// midnight rollover, epochs before the first date, bad fields.
func TestNMEAHandWritten(t *testing.T) {
	s := func(b string) string { return withChecksum('$', b) + "\r\n" }
	log := "# comment\n\n" +
		// epoch 1: GGA before any date; dated from the RMC of epoch 2
		s("GNGGA,235958.50,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") +
		s("GNGST,235958.50,1.5,2.0,1.0,30.0,1.2,1.6,2.5") +
		s("HEHDT,274.07,T") +
		s("GLVTG,054.7,034.4,005.5,010.2") + // pre-2.0 layout: course true, magnetic, knots, km/h
		// epoch 2: RMC dates 230394 = 23 March 1994
		s("GARMC,235959.00,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W") +
		// epoch 3: GGA only, after midnight: the next day
		s("BDGGA,000000.00,4807.039,S,01131.001,W,4,12,0.5,545.0,M,,M,,") +
		s("GPGGA,000001,48x7.039,N,01131.001,E,1,12,0.5,545.0,M,,M,,") + // bad latitude
		"$GPGGA,000002,4807.039,N,01131.001,E,1,12,0.5,545.0,M,,M,,\n" + // no checksum
		s("GPRMC,000003,A,4807.039,N,01131.001,E,1.0,400.0,240394,,") + // course over 360
		s("GPZDA,000004.00,24,03,1994,00,00") +
		s("GPGGA,000004.00,4807.040,N,01131.002,E,1,12,0.5,545.0,M,,M,,")
	fixes, r := readAllNMEA(t, "hand.log", []byte(log), NMEAConfig{})
	if len(fixes) != 4 {
		t.Fatalf("%d fixes: %+v", len(fixes), fixes)
	}
	f := fixes[0]
	if !f.T.Equal(utc("1994-03-23T23:59:58.5")) || !f.Dated || f.Talker != [2]byte{'G', 'N'} ||
		math.Abs(f.Lat-(48+7.038/60)) > 1e-12 || f.Heading != 274.07 || f.SOG != 5.5 || f.COG != 54.7 ||
		f.LatStd != 1.2 || f.LonStd != 1.6 || f.AltStd != 2.5 {
		t.Errorf("epoch 1: %+v", f)
	}
	if h := f.HorizStd(); math.Abs(h-math.Sqrt((1.2*1.2+1.6*1.6)/2)) > 1e-15 {
		t.Errorf("HorizStd %v", h)
	}
	f = fixes[1]
	if !f.T.Equal(utc("1994-03-23T23:59:59")) || f.Quality != -1 || f.SOG != 22.4 || f.COG != 84.4 || !math.IsNaN(f.Alt) {
		t.Errorf("epoch 2: %+v", f)
	}
	f = fixes[2]
	if !f.T.Equal(utc("1994-03-24T00:00:00")) || f.Quality != 4 || f.Lat > 0 || f.Lon > 0 || !math.IsNaN(f.GeoidSep) {
		t.Errorf("epoch 3: %+v", f)
	}
	if f = fixes[3]; !f.T.Equal(utc("1994-03-24T00:00:04")) {
		t.Errorf("epoch 4: %+v", f)
	}
	st := r.Stats()
	if st.Rollovers != 1 || st.Comments != 2 {
		t.Errorf("stats %+v", st)
	}
	want := []string{
		"hand.log:9: GPGGA latitude: bad value \"48x7.039\"",
		"hand.log:10: checksum: missing",
		"hand.log:11: GPRMC course: bad value \"400.0\"",
	}
	if got := r.Issues(); len(got) != len(want) {
		t.Errorf("issues %v", got)
	} else {
		for i := range want {
			if got[i].Error() != want[i] {
				t.Errorf("issue %q, want %q", got[i].Error(), want[i])
			}
		}
	}
	c := r.Sentences()
	if c["GPGGA"] != (SentenceCount{OK: 1, NoChecksum: 1, BadField: 1}) || c["GPRMC"].BadField != 1 || c["HEHDT"].OK != 1 {
		t.Errorf("counts %v", c)
	}

	// With AllowNoChecksum the unchecked sentence is read.
	fixes, _ = readAllNMEA(t, "hand.log", []byte(log), NMEAConfig{AllowNoChecksum: true})
	if len(fixes) != 5 || !fixes[3].T.Equal(utc("1994-03-24T00:00:02")) {
		t.Errorf("AllowNoChecksum: %d fixes", len(fixes))
	}
}

// Epochs before the first date are dated back from it, a day earlier
// across midnight.
func TestNMEABackDating(t *testing.T) {
	log := withChecksum('$', "GPGGA,235959,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") + "\n" +
		withChecksum('$', "GPGGA,000000,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") + "\n" +
		withChecksum('$', "GPRMC,000001,A,4807.038,N,01131.000,E,022.4,084.4,010100,003.1,W") + "\n"
	fixes, _ := readAllNMEA(t, "x", []byte(log), NMEAConfig{})
	want := []string{"1999-12-31T23:59:59", "2000-01-01T00:00:00", "2000-01-01T00:00:01"}
	if len(fixes) != 3 {
		t.Fatalf("%d fixes", len(fixes))
	}
	for i, w := range want {
		if !fixes[i].T.Equal(utc(w)) || !fixes[i].Dated {
			t.Errorf("fix %d at %v, want %s", i, fixes[i].T, w)
		}
	}
}

// Without any date, fixes come out undated; with NMEAConfig.Date they
// take that day.
func TestNMEAUndated(t *testing.T) {
	log := withChecksum('$', "GPGGA,120000,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") + "\n" +
		withChecksum('$', "GPGGA,120001,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,") + "\n"
	fixes, r := readAllNMEA(t, "x", []byte(log), NMEAConfig{})
	if len(fixes) != 2 || fixes[0].Dated || !fixes[1].T.Equal(utc("0001-01-01T12:00:01")) || r.Stats().Undated != 2 {
		t.Errorf("undated: %+v", fixes)
	}
	fixes, _ = readAllNMEA(t, "x", []byte(log), NMEAConfig{Date: utc("2024-02-29T00:00:00")})
	if len(fixes) != 2 || !fixes[1].Dated || !fixes[1].T.Equal(utc("2024-02-29T12:00:01")) {
		t.Errorf("with Date: %+v", fixes)
	}
	tr, _ := ReadNMEATrack(strings.NewReader(log), "x", NMEAConfig{})
	if len(tr.Points) != 0 {
		t.Errorf("undated fixes in the track: %d", len(tr.Points))
	}
}

// ReadNMEATrack converts knots to m/s (1 kn = 1852/3600 m/s, the
// international knot) and keeps HorizStd from GST.
func TestReadNMEATrack(t *testing.T) {
	tr, r := ReadNMEATrack(bytes.NewReader(sharedFile(t, "nmea-gpsd-logs", "nmea-rtk.log")), "nmea-rtk.log", NMEAConfig{})
	if len(tr.Points) != 122 || tr.ID != "GN" || tr.Source != "nmea-rtk.log" || r.Stats().Fixes != 122 {
		t.Fatalf("track %s with %d points", tr.ID, len(tr.Points))
	}
	if p := tr.Points[0]; math.Abs(p.SOG-0.148*1852/3600) > 1e-15 || p.COG != 124.888 || !math.IsNaN(p.HorizStd) || p.Alt != 278.161 {
		t.Errorf("first point %+v", p)
	}
}

// makeNMEALog writes n one-second epochs of RMC+GGA+VTG+GST+HDT.
func makeNMEALog(n int) []byte {
	var b bytes.Buffer
	t0 := utc("2021-06-01T10:00:00")
	for i := range n {
		tm := t0.Add(time.Duration(i) * time.Second)
		hms := tm.Format("150405") + ".00"
		lat := fmt.Sprintf("%02d%07.4f", 52, 50+float64(i%600)/1000)
		b.WriteString(withChecksum('$', "GPRMC,"+hms+",A,"+lat+",N,00542.3492,E,5.2,231.5,"+tm.Format("020106")+",1.3,E,A") + "\r\n")
		b.WriteString(withChecksum('$', "GPVTG,231.5,T,230.2,M,5.2,N,9.6,K,A") + "\r\n")
		b.WriteString(withChecksum('$', "GPGGA,"+hms+","+lat+",N,00542.3492,E,1,09,1.03,-6.0,M,45.8,M,,") + "\r\n")
		b.WriteString(withChecksum('$', "GPGST,"+hms+",0.8,1.9,1.1,33.0,1.3,1.7,2.9") + "\r\n")
		b.WriteString(withChecksum('$', "GPHDT,232.0,T") + "\r\n")
		b.WriteString(withChecksum('$', "GPGSV,3,1,10,03,39,230,23,08,31,170,31,10,08,058,31,11,65,149,31") + "\r\n")
	}
	return b.Bytes()
}

func TestNMEANoAllocs(t *testing.T) {
	data := makeNMEALog(2000)
	r := NewNMEAReader(bytes.NewReader(data), "gen", NMEAConfig{})
	for range 10 { // warm up: counters and buffers
		r.Scan()
	}
	n := testing.AllocsPerRun(500, func() {
		if !r.Scan() {
			t.Fatal("log ended")
		}
	})
	if n != 0 {
		t.Errorf("%v allocations per fix", n)
	}
	if f := r.Fix(); f.Heading != 232 || f.HorizStd() != math.Sqrt((1.3*1.3+1.7*1.7)/2) {
		t.Errorf("fix %+v", f)
	}
}

func BenchmarkNMEA(b *testing.B) {
	data := makeNMEALog(3000)
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	for b.Loop() {
		r := NewNMEAReader(bytes.NewReader(data), "gen", NMEAConfig{})
		n := 0
		for r.Scan() {
			n++
		}
		if n != 3000 {
			b.Fatalf("%d fixes", n)
		}
	}
}
