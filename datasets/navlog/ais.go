package navlog

import (
	"io"
	"math"
	"strconv"
	"time"
)

// AISReport is a decoded AIS position report: message types 1, 2 and 3
// (Class A) and 18 and 19 (Class B), fields as in ITU-R M.1371-5 Annex 8.
type AISReport struct {
	Line    int  // line of the message's last sentence
	Own     bool // from a VDO sentence (the receiver's own vessel)
	Channel byte // radio channel 'A' or 'B' (or '1', '2'); 0 if not given
	Type    int
	Repeat  int
	MMSI    uint32
	Status  int // navigation status 0-15 for types 1-3 (15 undefined); -1 for Class B

	SOG      float64 // speed over ground, knots; NaN if not available; 102.2 means 102.2 or more
	Accurate bool    // position accuracy flag: high (better than 10 m)
	Lat, Lon float64 // degrees; NaN if not available or out of range
	COG      float64 // course over ground, degrees; NaN if not available
	Heading  float64 // true heading, degrees; NaN if not available
	Second   int     // UTC second of the report; 60 not available, 61-63 special positioning states

	// T is the report's time estimated from the receiver: the time of the
	// latest RMC or ZDA sentence in the log, moved to the report's second
	// within ±30 s. Timed is false when the log has had no dated receiver
	// time yet; T is then zero.
	T     time.Time
	Timed bool
}

// AISStats counts what an AIS reader has seen.
type AISStats struct {
	Lines       int     // lines read
	Sentences   int     // VDM/VDO sentences with a good checksum and usable fields
	BadChecksum int     // VDM/VDO sentences with a wrong checksum
	NoChecksum  int     // VDM/VDO sentences without a checksum
	BadField    int     // VDM/VDO sentences with a field that could not be used
	Messages    int     // complete messages, single-sentence or reassembled
	Incomplete  int     // multi-sentence messages dropped for a missing or out-of-order fragment
	ByType      [64]int // complete messages by message type
	Reports     int     // position reports returned by Scan
	BadReports  int     // position messages too short to decode, not returned
	Vessels     int     // distinct MMSIs in all complete messages
	Other       int     // other lines, skipped
}

// fragment is a multi-sentence message being reassembled.
type fragment struct {
	active      bool
	total, next int
	payload     []byte // 6-bit values so far
}

// AISReader reads AIS position reports from !xxVDM and !xxVDO sentences
// (any talker), reassembling multi-sentence messages by sequential
// message id and channel. RMC and ZDA sentences in the same log give the
// receiver time used for AISReport.T.
type AISReader struct {
	issueLog
	lines  lineReader
	fields [maxFields][]byte
	stats  AISStats
	rep    AISReport

	frags   [11][3]fragment // by sequential id (10: none) and channel (A/1, B/2, other)
	payload []byte          // 6-bit values of a single-sentence message
	vessels map[uint32]struct{}
	names   map[uint32]string

	rxT  time.Time // latest receiver time
	rxOK bool
}

// NewAISReader returns a reader of r; name is used in issues.
func NewAISReader(r io.Reader, name string) *AISReader {
	return &AISReader{
		issueLog: issueLog{file: name},
		lines:    newLineReader(r),
		vessels:  make(map[uint32]struct{}),
		names:    make(map[uint32]string),
	}
}

// Report returns the current position report, valid until the next Scan.
func (r *AISReader) Report() *AISReport { return &r.rep }

// Err returns the read error that ended the input, if any.
func (r *AISReader) Err() error { return r.lines.err }

// Stats returns the counts so far; at the end of input, fragments still
// waiting are counted as Incomplete.
func (r *AISReader) Stats() AISStats { return r.stats }

// Names returns the vessel names decoded so far from static messages
// (types 5, 19 and 24 part A), by MMSI. The map is the reader's own; do
// not modify it.
func (r *AISReader) Names() map[uint32]string { return r.names }

// Scan advances to the next position report and reports whether there is
// one.
func (r *AISReader) Scan() bool {
	for {
		line, tooLong, ok := r.lines.next()
		if !ok {
			for i := range r.frags {
				for j := range r.frags[i] {
					if r.frags[i][j].active {
						r.frags[i][j].active = false
						r.stats.Incomplete++
					}
				}
			}
			return false
		}
		r.stats.Lines++
		if tooLong {
			r.stats.Other++
			r.add(r.lines.line, "line", "longer than %d bytes", maxLine)
			continue
		}
		if r.sentence(line) {
			r.stats.Reports++
			return true
		}
	}
}

// sentence handles one line and reports whether it completed a position
// report.
func (r *AISReader) sentence(line []byte) bool {
	ln := r.lines.line
	n, st := splitSentence(line, &r.fields)
	if st == frameNotSentence || n == 0 || len(r.fields[0]) != 5 {
		r.stats.Other++
		return false
	}
	f := r.fields[:n]
	kind := string(f[0][2:])
	if line[0] == '$' {
		if st == frameOK && (kind == "RMC" || kind == "ZDA") {
			r.receiverTime(kind, f)
		}
		r.stats.Other++
		return false
	}
	if kind != "VDM" && kind != "VDO" {
		r.stats.Other++
		return false
	}
	switch st {
	case frameBadChecksum:
		r.stats.BadChecksum++
		r.add(ln, "checksum", "does not match the sentence")
		return false
	case frameNoChecksum:
		r.stats.NoChecksum++
		r.add(ln, "checksum", "missing")
		return false
	}
	if len(f) < 7 {
		r.stats.BadField++
		r.add(ln, string(f[0]), "%d fields, too few", len(f)-1)
		return false
	}
	total, ok1 := parseInt(f[1])
	num, ok2 := parseInt(f[2])
	fill, ok3 := parseInt(f[6])
	seq := 10
	if len(f[3]) > 0 {
		s, ok := parseInt(f[3])
		if !ok || len(f[3]) != 1 {
			return r.badField(ln, f[0], "sequential message id", f[3])
		}
		seq = s
	}
	switch {
	case !ok1 || total < 1 || total > 9:
		return r.badField(ln, f[0], "fragment count", f[1])
	case !ok2 || num < 1 || num > total:
		return r.badField(ln, f[0], "fragment number", f[2])
	case !ok3 || fill > 5:
		return r.badField(ln, f[0], "fill bits", f[6])
	case !armoured(f[5]):
		return r.badField(ln, f[0], "payload", f[5])
	case len(f[4]) > 1:
		return r.badField(ln, f[0], "channel", f[4])
	}
	r.stats.Sentences++
	var ch byte
	if len(f[4]) == 1 {
		ch = f[4][0]
	}
	own := kind == "VDO"
	if total == 1 {
		r.payload = dearmour(r.payload[:0], f[5])
		return r.message(ln, own, ch, r.payload, fill)
	}
	fr := &r.frags[seq][chanIndex(ch)]
	if num == 1 {
		if fr.active {
			r.stats.Incomplete++
		}
		fr.active, fr.total, fr.next = true, total, 1
		fr.payload = fr.payload[:0]
	} else if !fr.active || fr.total != total || fr.next != num {
		if fr.active {
			r.stats.Incomplete++
			fr.active = false
		}
		r.stats.Incomplete++ // this fragment's message cannot be completed
		r.add(ln, string(f[0]), "fragment %d of %d without the ones before it", num, total)
		return false
	}
	fr.payload = dearmour(fr.payload, f[5])
	fr.next++
	if num < total {
		return false
	}
	fr.active = false
	return r.message(ln, own, ch, fr.payload, fill)
}

func (r *AISReader) badField(line int, addr []byte, field string, v []byte) bool {
	r.stats.BadField++
	r.add(line, string(addr)+" "+field, "bad value %q", v)
	return false
}

func chanIndex(c byte) int {
	switch c {
	case 'A', '1':
		return 0
	case 'B', '2':
		return 1
	}
	return 2
}

// armoured reports whether every byte is a payload character of ITU-R
// M.1371-5 Annex 8: '0' to 'W' and '`' to 'w'.
func armoured(p []byte) bool {
	for _, c := range p {
		if c < '0' || c > 'w' || (c > 'W' && c < '`') {
			return false
		}
	}
	return true
}

// dearmour appends the 6-bit values of payload characters: subtract 48,
// and 8 more if the result exceeds 40 (ITU-R M.1371-5 Annex 8).
func dearmour(dst, p []byte) []byte {
	for _, c := range p {
		v := c - 48
		if v > 40 {
			v -= 8
		}
		dst = append(dst, v)
	}
	return dst
}

// bits reads n <= 32 bits, most significant first, from bit offset start
// of a 6-bit payload.
func bits(p []byte, start, n int) uint32 {
	var v uint32
	for i := start; i < start+n; i++ {
		v = v<<1 | uint32(p[i/6]>>(5-i%6))&1
	}
	return v
}

// sbits reads n bits as a two's-complement signed number.
func sbits(p []byte, start, n int) int32 {
	return int32(bits(p, start, n)<<(32-n)) >> (32 - n)
}

// message decodes a complete message and reports whether it is a
// position report now in r.rep.
func (r *AISReader) message(line int, own bool, ch byte, p []byte, fill int) bool {
	nbits := 6*len(p) - fill
	r.stats.Messages++
	if nbits < 38 {
		r.stats.BadReports++
		r.add(line, "AIS message", "%d bits, too short for a header", max(nbits, 0))
		return false
	}
	typ := int(bits(p, 0, 6))
	r.stats.ByType[typ]++
	mmsi := bits(p, 8, 30)
	if _, seen := r.vessels[mmsi]; !seen {
		r.vessels[mmsi] = struct{}{}
		r.stats.Vessels++
	}
	switch typ {
	case 5:
		r.name(mmsi, p, nbits, 112)
		return false
	case 24:
		if nbits >= 40 && bits(p, 38, 2) == 0 {
			r.name(mmsi, p, nbits, 40)
		}
		return false
	case 1, 2, 3, 18, 19:
	default:
		return false
	}
	need := 143 // through the time stamp of types 1-3
	if typ >= 18 {
		need = 139
	}
	if nbits < need {
		r.stats.BadReports++
		r.add(line, "AIS message", "type %d with %d bits, too short for a position report", typ, nbits)
		return false
	}
	rep := AISReport{Line: line, Own: own, Channel: ch, Type: typ, Repeat: int(bits(p, 6, 2)), MMSI: mmsi, Status: -1}
	var sog, lon, lat, cog, hdg, sec int
	if typ <= 3 {
		rep.Status = int(bits(p, 38, 4))
		sog = int(bits(p, 50, 10))
		rep.Accurate = bits(p, 60, 1) == 1
		lon, lat = int(sbits(p, 61, 28)), int(sbits(p, 89, 27))
		cog, hdg, sec = int(bits(p, 116, 12)), int(bits(p, 128, 9)), int(bits(p, 137, 6))
	} else {
		sog = int(bits(p, 46, 10))
		rep.Accurate = bits(p, 56, 1) == 1
		lon, lat = int(sbits(p, 57, 28)), int(sbits(p, 85, 27))
		cog, hdg, sec = int(bits(p, 112, 12)), int(bits(p, 124, 9)), int(bits(p, 133, 6))
		if typ == 19 {
			r.name(mmsi, p, nbits, 143)
		}
	}
	nan := math.NaN()
	rep.SOG, rep.Lon, rep.Lat, rep.COG, rep.Heading = nan, nan, nan, nan, nan
	if sog != 1023 {
		rep.SOG = float64(sog) / 10
	}
	// Positions are in 1/10000 minute; 181° and 91° mean not available.
	if lon != 181*600000 && lon >= -180*600000 && lon <= 180*600000 {
		rep.Lon = float64(lon) / 600000
	}
	if lat != 91*600000 && lat >= -90*600000 && lat <= 90*600000 {
		rep.Lat = float64(lat) / 600000
	}
	if cog < 3600 {
		rep.COG = float64(cog) / 10
	}
	if hdg < 360 {
		rep.Heading = float64(hdg)
	}
	rep.Second = sec
	if r.rxOK {
		rep.T, rep.Timed = r.rxT, true
		if sec < 60 {
			t := r.rxT.Truncate(time.Minute).Add(time.Duration(sec) * time.Second)
			switch d := t.Sub(r.rxT); {
			case d > 30*time.Second:
				t = t.Add(-time.Minute)
			case d < -30*time.Second:
				t = t.Add(time.Minute)
			}
			rep.T = t
		}
	}
	r.rep = rep
	return true
}

// name records the vessel name of 20 six-bit characters at bit start
// (trailing '@' padding and spaces removed), if the message holds it.
func (r *AISReader) name(mmsi uint32, p []byte, nbits, start int) {
	if nbits < start+120 {
		return
	}
	var b [20]byte
	n := 0
	for i := range 20 {
		v := byte(bits(p, start+6*i, 6))
		if v < 32 {
			v += 64
		}
		b[i] = v
		if v != '@' && v != ' ' {
			n = i + 1
		}
	}
	if n == 0 || r.names[mmsi] == string(b[:n]) {
		return
	}
	r.names[mmsi] = string(b[:n])
}

// receiverTime takes the receiver's UTC time from an RMC or ZDA sentence.
func (r *AISReader) receiverTime(kind string, f [][]byte) {
	if len(f) < 5 {
		return
	}
	tod, ok := parseTOD(f[1])
	if !ok {
		return
	}
	var d date
	switch {
	case kind == "RMC" && len(f) > 9:
		d, ok = parseDDMMYY(f[9])
	case kind == "ZDA":
		dd, ok1 := parseInt(f[2])
		mm, ok2 := parseInt(f[3])
		yy, ok3 := parseInt(f[4])
		d, ok = checkDate(yy, mm, dd)
		ok = ok && ok1 && ok2 && ok3
	default:
		ok = false
	}
	if ok {
		r.rxT, r.rxOK = d.at(tod), true
	}
}

// TrackConfig sets how reports are grouped into tracks; the zero value
// gives the defaults.
type TrackConfig struct {
	// Gap splits a vessel's track where consecutive reports are more than
	// Gap apart. If zero, 10 minutes is used; if negative, tracks are
	// never split.
	Gap time.Duration
}

func (c TrackConfig) gap() time.Duration {
	switch {
	case c.Gap == 0:
		return 10 * time.Minute
	case c.Gap < 0:
		return math.MaxInt64
	}
	return c.Gap
}

// TrackStats counts what grouping reports into vessel tracks did.
type TrackStats struct {
	Reports    int // reports with a position, before duplicates were dropped
	Vessels    int // distinct MMSIs among them
	Tracks     int // tracks after splitting at gaps
	Duplicates int // reports dropped as exact duplicates of an earlier one
}

// ReadAISTracks reads the position reports of an AIS log and groups those
// with a position into one track per vessel (ID the MMSI, Name from the
// static messages), sorted by time, with exact duplicates (the same
// report heard twice) dropped and split at gaps as cfg says. Reports
// without a receiver time keep their log order. Tracks come in MMSI
// order. It returns the reader too, for its counts and issues.
func ReadAISTracks(rd io.Reader, name string, cfg TrackConfig) ([]Track, TrackStats, *AISReader) {
	r := NewAISReader(rd, name)
	byVessel := make(map[uint32][]Point)
	for r.Scan() {
		p := r.Report()
		if math.IsNaN(p.Lat) || math.IsNaN(p.Lon) {
			continue
		}
		byVessel[p.MMSI] = append(byVessel[p.MMSI], Point{T: p.T, Lat: p.Lat, Lon: p.Lon, Alt: math.NaN(),
			SOG: p.SOG * knot, COG: p.COG, Heading: p.Heading, HorizStd: math.NaN()})
	}
	tracks, st := vesselTracks(name, byVessel, r.names, cfg.gap())
	return tracks, st, r
}

// vesselTracks sorts each vessel's points by time, drops exact
// duplicates, splits at gaps and returns the tracks in MMSI order.
func vesselTracks(source string, byVessel map[uint32][]Point, names map[uint32]string, gap time.Duration) ([]Track, TrackStats) {
	ids := make([]uint32, 0, len(byVessel))
	for id := range byVessel {
		ids = append(ids, id)
	}
	sortUint32(ids)
	st := TrackStats{Vessels: len(ids)}
	var out []Track
	for _, id := range ids {
		all := byVessel[id]
		st.Reports += len(all)
		pts := dropDuplicates(sortPoints(all))
		st.Duplicates += len(all) - len(pts)
		out = SplitAtGaps(out, Track{Source: source, ID: strconv.FormatUint(uint64(id), 10), Part: 1,
			Name: names[id], Points: pts}, gap)
	}
	st.Tracks = len(out)
	return out, st
}
