package navlog

import (
	"bytes"
	"io"
	"math"
	"time"
)

// AISCSVRow is one row of an AIS CSV export in the MarineCadastre layout
// (columns MMSI, BaseDateTime, LAT, LON, SOG, COG, Heading, VesselName,
// ..., Status, ..., TransceiverClass, found by header name).
type AISCSVRow struct {
	Line       int
	MMSI       uint32
	T          time.Time // BaseDateTime, UTC
	Lat, Lon   float64   // degrees
	SOG        float64   // knots; NaN if empty or 102.3 (not available)
	COG        float64   // degrees; NaN if empty or 360 (not available)
	Heading    float64   // degrees; NaN if empty or 511 (not available)
	Status     int       // navigation status; -1 if empty or absent
	Class      byte      // TransceiverClass 'A' or 'B'; 0 if empty or absent
	VesselName []byte    // valid until the next Scan; nil if absent
}

// AISCSVStats counts what an AIS CSV reader has seen.
type AISCSVStats struct {
	Lines   int // lines read, header included
	Rows    int // rows returned by Scan
	BadRows int // rows skipped (bad MMSI, time, position, or too few fields)
	NoPos   int // rows skipped because LAT 91 or LON 181 (not available)
}

// aisCSV column indexes; -1 when the header lacks the column.
type aisCSVCols struct {
	mmsi, t, lat, lon, sog, cog, hdg, name, status, class int
}

// AISCSVReader reads AIS rows from a CSV export in the MarineCadastre
// layout. The header names the columns (any order, names matched without
// regard to case); MMSI, BaseDateTime, LAT and LON are required. Fields
// may be double-quoted (RFC 4180, without line breaks inside quotes).
type AISCSVReader struct {
	issueLog
	lines  lineReader
	cols   aisCSVCols
	ncols  int
	fields [][]byte
	quoted []byte // unquoted copies of quoted fields, reused
	row    AISCSVRow
	stats  AISCSVStats
	header bool // header read
	err    error
}

// NewAISCSVReader returns a reader of r; name is used in issues.
func NewAISCSVReader(r io.Reader, name string) *AISCSVReader {
	return &AISCSVReader{issueLog: issueLog{file: name}, lines: newLineReader(r)}
}

// Row returns the current row, valid until the next Scan.
func (r *AISCSVReader) Row() *AISCSVRow { return &r.row }

// Err returns the read error that ended the input, or a header without
// the required columns; nil at a clean end.
func (r *AISCSVReader) Err() error {
	if r.err != nil {
		return r.err
	}
	return r.lines.err
}

// Stats returns the counts so far.
func (r *AISCSVReader) Stats() AISCSVStats { return r.stats }

// Scan advances to the next usable row and reports whether there is one.
func (r *AISCSVReader) Scan() bool {
	if r.err != nil {
		return false
	}
	for {
		line, tooLong, ok := r.lines.next()
		if !ok {
			return false
		}
		r.stats.Lines++
		ln := r.lines.line
		if tooLong {
			r.stats.BadRows++
			r.add(ln, "line", "longer than %d bytes", maxLine)
			continue
		}
		if len(bytes.TrimSpace(line)) == 0 {
			continue
		}
		if !r.split(line) {
			r.stats.BadRows++
			r.add(ln, "line", "unterminated quoted field")
			continue
		}
		if !r.header {
			if !r.readHeader(ln) {
				return false
			}
			continue
		}
		if r.parseRow(ln) {
			r.stats.Rows++
			return true
		}
	}
}

// split cuts a line into fields at commas, unquoting "..." fields.
func (r *AISCSVReader) split(line []byte) bool {
	r.fields = r.fields[:0]
	r.quoted = r.quoted[:0]
	// Quoted fields are unquoted into r.quoted; it must not move while
	// fields point into it, so size it up front.
	if cap(r.quoted) < len(line) {
		r.quoted = make([]byte, 0, len(line))
	}
	for i := 0; ; {
		if i < len(line) && line[i] == '"' {
			start := len(r.quoted)
			i++
			for {
				if i >= len(line) {
					return false
				}
				if line[i] == '"' {
					if i+1 < len(line) && line[i+1] == '"' {
						r.quoted = append(r.quoted, '"')
						i += 2
						continue
					}
					i++
					break
				}
				r.quoted = append(r.quoted, line[i])
				i++
			}
			r.fields = append(r.fields, r.quoted[start:len(r.quoted):len(r.quoted)])
			// anything between the closing quote and the comma is ignored
			for i < len(line) && line[i] != ',' {
				i++
			}
		} else {
			j := bytes.IndexByte(line[i:], ',')
			if j < 0 {
				j = len(line) - i
			}
			r.fields = append(r.fields, bytes.TrimSpace(line[i:i+j]))
			i += j
		}
		if i >= len(line) {
			return true
		}
		i++ // the comma
		if i == len(line) {
			r.fields = append(r.fields, nil)
			return true
		}
	}
}

func (r *AISCSVReader) readHeader(line int) bool {
	r.header = true
	c := aisCSVCols{-1, -1, -1, -1, -1, -1, -1, -1, -1, -1}
	for i, f := range r.fields {
		f = bytes.TrimPrefix(f, []byte("\xef\xbb\xbf")) // a UTF-8 byte-order mark
		for _, m := range []struct {
			name string
			col  *int
		}{
			{"mmsi", &c.mmsi}, {"basedatetime", &c.t}, {"lat", &c.lat}, {"lon", &c.lon},
			{"sog", &c.sog}, {"cog", &c.cog}, {"heading", &c.hdg}, {"vesselname", &c.name},
			{"status", &c.status}, {"transceiverclass", &c.class},
		} {
			if bytes.EqualFold(f, []byte(m.name)) && *m.col < 0 {
				*m.col = i
			}
		}
	}
	r.cols, r.ncols = c, len(r.fields)
	for _, m := range []struct {
		name string
		col  int
	}{{"MMSI", c.mmsi}, {"BaseDateTime", c.t}, {"LAT", c.lat}, {"LON", c.lon}} {
		if m.col < 0 {
			r.err = Issue{r.file, line, "header", "no " + m.name + " column"}
			return false
		}
	}
	return true
}

// get returns field i, or nil if the column is absent.
func (r *AISCSVReader) get(i int) []byte {
	if i < 0 || i >= len(r.fields) {
		return nil
	}
	return r.fields[i]
}

func (r *AISCSVReader) parseRow(ln int) bool {
	c := &r.cols
	if len(r.fields) != r.ncols {
		r.stats.BadRows++
		r.add(ln, "row", "%d fields, header has %d", len(r.fields), r.ncols)
		return false
	}
	nan := math.NaN()
	row := AISCSVRow{Line: ln, SOG: nan, COG: nan, Heading: nan, Status: -1}
	m, ok := parseInt(r.get(c.mmsi))
	if !ok || m == 0 {
		return r.badRow(ln, "MMSI", r.get(c.mmsi))
	}
	row.MMSI = uint32(m)
	if row.T, ok = parseISOTime(r.get(c.t)); !ok {
		return r.badRow(ln, "BaseDateTime", r.get(c.t))
	}
	lat, ok1 := parseNum(r.get(c.lat))
	lon, ok2 := parseNum(r.get(c.lon))
	switch {
	case !ok1:
		return r.badRow(ln, "LAT", r.get(c.lat))
	case !ok2:
		return r.badRow(ln, "LON", r.get(c.lon))
	case lat == 91 || lon == 181:
		r.stats.NoPos++
		return false
	case lat < -90 || lat > 90:
		return r.badRow(ln, "LAT", r.get(c.lat))
	case lon < -180 || lon > 180:
		return r.badRow(ln, "LON", r.get(c.lon))
	}
	row.Lat, row.Lon = lat, lon
	// Optional values: a bad one is reported and read as missing.
	row.SOG = r.optional(ln, "SOG", c.sog, 0, 102.2, 102.3)
	row.COG = r.optional(ln, "COG", c.cog, 0, 359.99, 360)
	row.Heading = r.optional(ln, "Heading", c.hdg, 0, 359.99, 511)
	if s := r.get(c.status); len(s) > 0 {
		if v, ok := parseInt(s); ok && v <= 15 {
			row.Status = v
		} else {
			r.add(ln, "Status", "bad value %q", s)
		}
	}
	if s := r.get(c.class); len(s) == 1 && (s[0] == 'A' || s[0] == 'B') {
		row.Class = s[0]
	} else if len(s) > 0 {
		r.add(ln, "TransceiverClass", "bad value %q", s)
	}
	if c.name >= 0 {
		row.VesselName = r.get(c.name)
	}
	r.row = row
	return true
}

func (r *AISCSVReader) badRow(ln int, field string, v []byte) bool {
	r.stats.BadRows++
	r.add(ln, field, "bad value %q", v)
	return false
}

// optional parses an optional value in [lo, hi]; empty, the
// not-available code na, or a bad value (reported) give NaN.
func (r *AISCSVReader) optional(ln int, field string, col int, lo, hi, na float64) float64 {
	s := r.get(col)
	if len(s) == 0 {
		return math.NaN()
	}
	v, ok := parseNum(s)
	switch {
	case ok && v == na:
		return math.NaN()
	case !ok || v < lo || v > hi:
		r.add(ln, field, "bad value %q", s)
		return math.NaN()
	}
	return v
}

// parseISOTime parses YYYY-MM-DDTHH:MM:SS (or a space for T), with an
// optional fraction of a second and an optional trailing Z, as UTC.
func parseISOTime(b []byte) (time.Time, bool) {
	if len(b) > 0 && b[len(b)-1] == 'Z' {
		b = b[:len(b)-1]
	}
	if len(b) < 19 || b[4] != '-' || b[7] != '-' || (b[10] != 'T' && b[10] != ' ') || b[13] != ':' || b[16] != ':' {
		return time.Time{}, false
	}
	y, ok1 := parseInt(b[0:4])
	mo, ok2 := parseInt(b[5:7])
	d, ok3 := parseInt(b[8:10])
	tod, ok4 := parseTOD([]byte{b[11], b[12], b[14], b[15], b[17], b[18]})
	if !ok1 || !ok2 || !ok3 || !ok4 || tod >= 24*time.Hour {
		return time.Time{}, false
	}
	if len(b) > 19 {
		if b[19] != '.' || len(b) == 20 || len(b) > 29 {
			return time.Time{}, false
		}
		scale := time.Second
		for _, c := range b[20:] {
			if c < '0' || c > '9' {
				return time.Time{}, false
			}
			scale /= 10
			tod += time.Duration(c-'0') * scale
		}
	}
	day, ok := checkDate(y, mo, d)
	if !ok {
		return time.Time{}, false
	}
	return day.at(tod), true
}

// ReadAISCSVTracks reads an AIS CSV export and groups its rows into one
// track per vessel (ID the MMSI, Name the last non-empty VesselName),
// sorted by time, exact duplicates dropped, split at gaps as cfg says.
// Tracks come in MMSI order. It returns the reader too, for its counts,
// issues and error.
func ReadAISCSVTracks(rd io.Reader, name string, cfg TrackConfig) ([]Track, TrackStats, *AISCSVReader) {
	r := NewAISCSVReader(rd, name)
	byVessel := make(map[uint32][]Point)
	names := make(map[uint32]string)
	for r.Scan() {
		row := r.Row()
		byVessel[row.MMSI] = append(byVessel[row.MMSI], Point{T: row.T, Lat: row.Lat, Lon: row.Lon, Alt: math.NaN(),
			SOG: row.SOG * knot, COG: row.COG, Heading: row.Heading, HorizStd: math.NaN()})
		if len(row.VesselName) > 0 && names[row.MMSI] != string(row.VesselName) {
			names[row.MMSI] = string(row.VesselName)
		}
	}
	tracks, st := vesselTracks(name, byVessel, names, cfg.gap())
	return tracks, st, r
}
