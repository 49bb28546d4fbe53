package navlog

import (
	"io"
	"math"
	"time"
)

// Fix is one receiver epoch assembled from the sentences that share its
// time of day: position from GGA (or RMC if there is no GGA), speed and
// course from RMC (or VTG), heading from HDT (or HDG), error standard
// deviations from GST. Fields a sentence did not supply are NaN, or -1
// for the integers.
type Fix struct {
	Line   int       // line of the sentence that opened the epoch
	T      time.Time // UTC
	Dated  bool      // T's date came from an RMC or ZDA sentence (or NMEAConfig.Date); if false T is on 0001-01-01
	Talker [2]byte   // talker of the position sentence ("GP", "GN", ...)

	Lat, Lon float64 // degrees
	Alt      float64 // GGA altitude above mean sea level, metres
	GeoidSep float64 // GGA geoid separation (ellipsoid height = Alt + GeoidSep), metres
	Quality  int     // GGA fix quality: 0 none, 1 GPS, 2 DGPS, 4 RTK fixed, 5 RTK float, ...
	Sats     int     // GGA satellites in use
	HDOP     float64 // GGA horizontal dilution of precision

	SOG     float64 // speed over ground, knots
	COG     float64 // course over ground, degrees true
	Heading float64 // true heading, degrees

	LatStd, LonStd, AltStd float64 // GST error standard deviations, metres
}

// HorizStd returns the root mean square of the GST latitude and
// longitude error standard deviations, metres (NaN without GST).
func (f *Fix) HorizStd() float64 {
	return math.Sqrt((f.LatStd*f.LatStd + f.LonStd*f.LonStd) / 2)
}

// NMEAConfig holds reader options; the zero value gives the defaults.
type NMEAConfig struct {
	// Date is the UTC day assumed for epochs before the first RMC or ZDA
	// date. If zero, such epochs wait until a date is seen and are dated
	// back from it, crossing midnight where the time of day says so; if
	// none is seen within 4096 epochs, or by the end, they come out with
	// Dated false.
	Date time.Time
	// AllowNoChecksum accepts sentences without "*hh". If false, they are
	// skipped and counted.
	AllowNoChecksum bool
}

// NMEAStats counts what an NMEA reader has seen.
type NMEAStats struct {
	Lines     int // lines read, including comments and blank lines
	Comments  int // lines starting with '#' (test-log headers), and blank lines
	NotNMEA   int // other lines that are not '$' or '!' sentences, or too long
	Fixes     int // fixes returned by Scan
	NoFix     int // epochs without a valid position (GGA quality 0, RMC status V), not returned
	Undated   int // fixes returned with Dated false
	Rollovers int // date advanced at midnight between two dated sentences
}

// epoch collects the sentences of one time of day.
type epoch struct {
	open bool
	line int
	tod  time.Duration

	hasDate bool
	day     date

	gga                  bool
	ggaTalker            [2]byte
	ggaLat, ggaLon       float64
	alt, sep, hdop       float64
	quality, sats        int
	rmc                  bool
	rmcTalker            [2]byte
	rmcValid             bool
	rmcLat, rmcLon       float64
	rmcSOG, rmcCOG       float64
	vtgSOG, vtgCOG       float64
	hdt, hdg             float64
	latStd, lonStd, hStd float64
}

func (e *epoch) reset(line int, tod time.Duration) {
	nan := math.NaN()
	*e = epoch{open: true, line: line, tod: tod,
		alt: nan, sep: nan, hdop: nan, quality: -1, sats: -1,
		rmcSOG: nan, rmcCOG: nan, vtgSOG: nan, vtgCOG: nan, hdt: nan, hdg: nan,
		latStd: nan, lonStd: nan, hStd: nan}
}

// NMEAReader reads fixes from an NMEA 0183 log. Sentences other than
// GGA, RMC, VTG, GST, HDT, HDG and ZDA (including AIS) are counted by
// address and skipped; any talker is accepted.
type NMEAReader struct {
	issueLog
	cfg    NMEAConfig
	lines  lineReader
	fields [maxFields][]byte
	counts map[string]*SentenceCount
	stats  NMEAStats

	cur  epoch
	fix  Fix
	out  []Fix // fixes ready to return, from outHead on
	head int

	haveDay bool
	day     date
	lastTOD time.Duration
	pending []Fix // fixes waiting for a date
}

// NewNMEAReader returns a reader of r; name is used in issues.
func NewNMEAReader(r io.Reader, name string, cfg NMEAConfig) *NMEAReader {
	nr := &NMEAReader{
		issueLog: issueLog{file: name},
		cfg:      cfg,
		lines:    newLineReader(r),
		counts:   make(map[string]*SentenceCount),
	}
	if !cfg.Date.IsZero() {
		d := cfg.Date.UTC()
		nr.haveDay, nr.day = true, date{d.Year(), int(d.Month()), d.Day()}
	}
	return nr
}

// maxPending bounds the fixes held while waiting for a date.
const maxPending = 4096

// Scan advances to the next fix and reports whether there is one.
func (r *NMEAReader) Scan() bool {
	for r.head >= len(r.out) {
		r.out, r.head = r.out[:0], 0
		line, tooLong, ok := r.lines.next()
		if !ok {
			if !r.cur.open && len(r.pending) == 0 {
				return false
			}
			r.closeEpoch()
			r.flushPending()
			continue
		}
		r.stats.Lines++
		if tooLong {
			r.stats.NotNMEA++
			r.add(r.lines.line, "line", "longer than %d bytes", maxLine)
			continue
		}
		r.sentence(line)
	}
	r.fix = r.out[r.head]
	r.head++
	r.stats.Fixes++
	if !r.fix.Dated {
		r.stats.Undated++
	}
	return true
}

// Fix returns the current fix, valid until the next Scan.
func (r *NMEAReader) Fix() *Fix { return &r.fix }

// Err returns the read error that ended the input, if any.
func (r *NMEAReader) Err() error { return r.lines.err }

// Stats returns the counts so far.
func (r *NMEAReader) Stats() NMEAStats { return r.stats }

// Sentences returns the counts so far by address ("GPGGA", "AIVDM");
// sentences whose address is not 1-8 upper-case letters or digits are
// counted under "?".
func (r *NMEAReader) Sentences() map[string]SentenceCount {
	m := make(map[string]SentenceCount, len(r.counts))
	for k, v := range r.counts {
		m[k] = *v
	}
	return m
}

func (r *NMEAReader) count(addr []byte) *SentenceCount {
	if !goodAddress(addr) {
		addr = []byte("?")
	}
	c := r.counts[string(addr)]
	if c == nil {
		c = new(SentenceCount)
		r.counts[string(addr)] = c
	}
	return c
}

func (r *NMEAReader) sentence(line []byte) {
	ln := r.lines.line
	if len(line) == 0 || line[0] == '#' {
		r.stats.Comments++
		return
	}
	n, st := splitSentence(line, &r.fields)
	if st == frameNotSentence {
		r.stats.NotNMEA++
		return
	}
	f := r.fields[:n]
	c := r.count(f[0])
	switch {
	case st == frameBadChecksum:
		c.BadChecksum++
		r.add(ln, "checksum", "does not match the sentence")
		return
	case st == frameNoChecksum && !r.cfg.AllowNoChecksum:
		c.NoChecksum++
		r.add(ln, "checksum", "missing")
		return
	}
	if line[0] != '$' || len(f[0]) != 5 {
		c.OK++ // framed and checked, but not a sentence read here
		return
	}
	var badField int
	var names *[12]string
	switch kind := string(f[0][2:]); kind {
	case "GGA":
		badField, names = r.gga(f, ln), &ggaFields
	case "RMC":
		badField, names = r.rmc(f, ln), &rmcFields
	case "VTG":
		badField, names = r.vtg(f), &vtgFields
	case "GST":
		badField, names = r.gst(f, ln), &gstFields
	case "HDT":
		badField, names = r.hdt(f), &hdtFields
	case "HDG":
		badField, names = r.hdgSentence(f), &hdgFields
	case "ZDA":
		badField, names = r.zda(f, ln), &zdaFields
	default:
		badField = -1
	}
	switch {
	case badField == 0:
		c.BadField++
		r.add(ln, string(f[0]), "%d fields, too few", len(f)-1)
		return
	case badField > 0:
		c.BadField++
		r.add(ln, string(f[0])+" "+names[badField], "bad value %q", f[badField])
		return
	}
	c.OK++
}

// Field names for issues, by field index (0: the field count).
var (
	ggaFields = [12]string{1: "time", 2: "latitude", 4: "longitude", 6: "quality", 7: "satellites", 8: "HDOP", 9: "altitude", 11: "geoid separation"}
	rmcFields = [12]string{1: "time", 2: "status", 3: "latitude", 5: "longitude", 7: "speed", 8: "course", 9: "date"}
	vtgFields = [12]string{1: "course", 3: "speed", 5: "speed"}
	gstFields = [12]string{1: "time", 6: "latitude error", 7: "longitude error", 8: "altitude error"}
	hdtFields = [12]string{1: "heading"}
	hdgFields = [12]string{1: "heading", 2: "deviation", 4: "variation"}
	zdaFields = [12]string{1: "time", 2: "date"}
)

// at returns the epoch for a timed sentence, closing the previous one if
// its time of day differs.
func (r *NMEAReader) at(tod time.Duration, line int) *epoch {
	if r.cur.open && r.cur.tod != tod {
		r.closeEpoch()
	}
	if !r.cur.open {
		r.cur.reset(line, tod)
	}
	return &r.cur
}

func need(f [][]byte, n int) bool { return len(f) > n }

func (r *NMEAReader) gga(f [][]byte, line int) int {
	if !need(f, 9) {
		return 0
	}
	tod, ok := parseTOD(f[1])
	if !ok {
		return 1
	}
	q, ok := parseInt(f[6])
	if !ok && len(f[6]) > 0 {
		return 6
	}
	if len(f[6]) == 0 {
		q = 0
	}
	var lat, lon float64
	if q > 0 {
		if lat, ok = parseLatLon(f[2], f[3], 90, 'N', 'S'); !ok {
			return 2
		}
		if lon, ok = parseLatLon(f[4], f[5], 180, 'E', 'W'); !ok {
			return 4
		}
	}
	sats := -1
	if len(f[7]) > 0 {
		if sats, ok = parseInt(f[7]); !ok {
			return 7
		}
	}
	hdop, ok := optNum(f[8])
	if !ok {
		return 8
	}
	alt, ok := optNum(f[9])
	if !ok {
		return 9
	}
	sep := math.NaN()
	if need(f, 11) {
		if sep, ok = optNum(f[11]); !ok {
			return 11
		}
	}
	e := r.at(tod, line)
	e.gga = true
	e.ggaTalker = [2]byte{f[0][0], f[0][1]}
	e.ggaLat, e.ggaLon, e.quality, e.sats, e.hdop, e.alt, e.sep = lat, lon, q, sats, hdop, alt, sep
	return -1
}

func (r *NMEAReader) rmc(f [][]byte, line int) int {
	if !need(f, 9) {
		return 0
	}
	tod, ok := parseTOD(f[1])
	if !ok {
		return 1
	}
	if len(f[2]) != 1 || (f[2][0] != 'A' && f[2][0] != 'V') {
		return 2
	}
	valid := f[2][0] == 'A'
	var lat, lon float64
	if valid {
		if lat, ok = parseLatLon(f[3], f[4], 90, 'N', 'S'); !ok {
			return 3
		}
		if lon, ok = parseLatLon(f[5], f[6], 180, 'E', 'W'); !ok {
			return 5
		}
	}
	sog, ok := optNum(f[7])
	if !ok || sog < 0 {
		return 7
	}
	cog, ok := optNum(f[8])
	if !ok || cog < 0 || cog > 360 {
		return 8
	}
	day, ok := parseDDMMYY(f[9])
	if !ok && len(f[9]) > 0 {
		return 9
	}
	e := r.at(tod, line)
	e.rmc, e.rmcValid = true, valid
	e.rmcTalker = [2]byte{f[0][0], f[0][1]}
	e.rmcLat, e.rmcLon, e.rmcSOG, e.rmcCOG = lat, lon, sog, math.Mod(cog, 360)
	if ok {
		e.hasDate, e.day = true, day
	}
	return -1
}

// vtg reads both the NMEA 2.0+ layout (course,T,course,M,knots,N,km/h,K)
// and the older one without unit letters (course,course,knots,km/h).
func (r *NMEAReader) vtg(f [][]byte) int {
	if !need(f, 4) {
		return 0
	}
	ic, is := 1, 3
	if len(f[2]) == 1 && f[2][0] == 'T' {
		if !need(f, 5) {
			return 0
		}
		ic, is = 1, 5
	}
	cog, ok := optNum(f[ic])
	if !ok || cog < 0 || cog > 360 {
		return ic
	}
	sog, ok := optNum(f[is])
	if !ok || sog < 0 {
		return is
	}
	if r.cur.open {
		r.cur.vtgCOG, r.cur.vtgSOG = math.Mod(cog, 360), sog
	}
	return -1
}

func (r *NMEAReader) gst(f [][]byte, line int) int {
	if !need(f, 8) {
		return 0
	}
	tod, ok := parseTOD(f[1])
	if !ok {
		return 1
	}
	var v [3]float64
	for i := range v {
		if v[i], ok = optNum(f[6+i]); !ok || v[i] < 0 {
			return 6 + i
		}
	}
	e := r.at(tod, line)
	e.latStd, e.lonStd, e.hStd = v[0], v[1], v[2]
	return -1
}

func (r *NMEAReader) hdt(f [][]byte) int {
	if !need(f, 1) {
		return 0
	}
	h, ok := optNum(f[1])
	if !ok || h < 0 || h > 360 {
		return 1
	}
	if r.cur.open && !math.IsNaN(h) {
		r.cur.hdt = math.Mod(h, 360)
	}
	return -1
}

// hdgSentence reads HDG (magnetic heading, deviation, variation). It gives
// a true heading, magnetic + deviation + variation with east positive,
// only when the variation is present (NMEA 0183 HDG definition, from
// memory); HDT takes precedence.
func (r *NMEAReader) hdgSentence(f [][]byte) int {
	if !need(f, 5) {
		return 0
	}
	h, ok := optNum(f[1])
	if !ok || h < 0 || h > 360 {
		return 1
	}
	dev, ok := signedAngle(f[2], f[3])
	if !ok {
		return 2
	}
	vr, ok := signedAngle(f[4], f[5])
	if !ok {
		return 4
	}
	if math.IsNaN(vr) || math.IsNaN(h) || !r.cur.open {
		return -1
	}
	if math.IsNaN(dev) {
		dev = 0
	}
	t := math.Mod(h+dev+vr, 360)
	if t < 0 {
		t += 360
	}
	r.cur.hdg = t
	return -1
}

// signedAngle reads an angle with its E/W letter, east positive; NaN if
// the angle is empty.
func signedAngle(v, ew []byte) (float64, bool) {
	a, ok := optNum(v)
	if !ok || a < 0 || a > 180 {
		return 0, false
	}
	if math.IsNaN(a) {
		return a, true
	}
	switch {
	case len(ew) == 1 && ew[0] == 'E':
		return a, true
	case len(ew) == 1 && ew[0] == 'W':
		return -a, true
	}
	return 0, false
}

func (r *NMEAReader) zda(f [][]byte, line int) int {
	if !need(f, 4) {
		return 0
	}
	tod, ok := parseTOD(f[1])
	if !ok {
		return 1
	}
	d, ok1 := parseInt(f[2])
	m, ok2 := parseInt(f[3])
	y, ok3 := parseInt(f[4])
	if !ok1 || !ok2 || !ok3 || len(f[4]) != 4 {
		return 2
	}
	day, ok := checkDate(y, m, d)
	if !ok {
		return 2
	}
	e := r.at(tod, line)
	e.hasDate, e.day = true, day
	return -1
}

// closeEpoch turns the open epoch into a fix, dates it, and queues it.
func (r *NMEAReader) closeEpoch() {
	e := &r.cur
	if !e.open {
		return
	}
	e.open = false
	nan := math.NaN()
	fx := Fix{Line: e.line, Alt: nan, GeoidSep: nan, Quality: e.quality, Sats: e.sats, HDOP: nan,
		SOG: nan, COG: nan, Heading: nan, LatStd: e.latStd, LonStd: e.lonStd, AltStd: e.hStd}
	switch {
	case e.gga && e.quality > 0:
		fx.Talker, fx.Lat, fx.Lon = e.ggaTalker, e.ggaLat, e.ggaLon
		fx.Alt, fx.GeoidSep, fx.HDOP = e.alt, e.sep, e.hdop
	case e.rmc && e.rmcValid && !e.gga:
		fx.Talker, fx.Lat, fx.Lon = e.rmcTalker, e.rmcLat, e.rmcLon
	default:
		r.stats.NoFix++
		if e.hasDate {
			r.dateFrom(e.day, e.tod)
		}
		return
	}
	if e.gga {
		fx.HDOP = e.hdop
	}
	fx.SOG, fx.COG = e.rmcSOG, e.rmcCOG
	if math.IsNaN(fx.SOG) {
		fx.SOG = e.vtgSOG
	}
	if math.IsNaN(fx.COG) {
		fx.COG = e.vtgCOG
	}
	fx.Heading = e.hdt
	if math.IsNaN(fx.Heading) {
		fx.Heading = e.hdg
	}
	switch {
	case e.hasDate:
		r.dateFrom(e.day, e.tod)
	case r.haveDay:
		if e.tod < r.lastTOD-12*time.Hour {
			r.day = r.day.addDays(1)
			r.stats.Rollovers++
		}
		r.lastTOD = e.tod
	default:
		fx.T = date{1, 1, 1}.at(e.tod)
		r.pending = append(r.pending, fx)
		if len(r.pending) >= maxPending {
			r.flushPending()
		}
		return
	}
	fx.T, fx.Dated = r.day.at(e.tod), true
	r.out = append(r.out, fx)
}

// dateFrom takes the day of a dated sentence and dates any fixes that
// were waiting for it, going back a day each time the time of day jumps
// forward by more than 12 hours (a midnight crossed).
func (r *NMEAReader) dateFrom(d date, tod time.Duration) {
	if len(r.pending) > 0 {
		day, next := d, tod
		for i := len(r.pending) - 1; i >= 0; i-- {
			p := &r.pending[i]
			ptod := p.T.Sub(date{1, 1, 1}.at(0))
			if ptod > next+12*time.Hour {
				day = day.addDays(-1)
			}
			p.T, p.Dated, next = day.at(ptod), true, ptod
		}
		r.out = append(r.out, r.pending...)
		r.pending = r.pending[:0]
	}
	r.haveDay, r.day, r.lastTOD = true, d, tod
}

// flushPending releases undated fixes as they are.
func (r *NMEAReader) flushPending() {
	r.out = append(r.out, r.pending...)
	r.pending = r.pending[:0]
}

// ReadNMEATrack reads a whole NMEA log into one track of its dated
// fixes, in log order, with ID the talker of the first fix. It returns
// the reader too, for its counts and issues.
func ReadNMEATrack(rd io.Reader, name string, cfg NMEAConfig) (Track, *NMEAReader) {
	r := NewNMEAReader(rd, name, cfg)
	tr := Track{Source: name, Part: 1}
	for r.Scan() {
		f := r.Fix()
		if !f.Dated {
			continue
		}
		if tr.ID == "" {
			tr.ID = string(f.Talker[:])
		}
		tr.Points = append(tr.Points, Point{T: f.T, Lat: f.Lat, Lon: f.Lon, Alt: f.Alt,
			SOG: f.SOG * knot, COG: f.COG, Heading: f.Heading, HorizStd: f.HorizStd()})
	}
	return tr, r
}
