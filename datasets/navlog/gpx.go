package navlog

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// GPX namespaces (topografix.com GPX 1.0 and 1.1 schemas).
const (
	gpx10 = "http://www.topografix.com/GPX/1/0"
	gpx11 = "http://www.topografix.com/GPX/1/1"
)

// GPXTrack is one <trk> of a GPX file: its name and the points of each
// <trkseg>, empty segments included.
type GPXTrack struct {
	Number   int // 1-based position of the track in the file
	Name     string
	Segments [][]Point
}

// GPXStats counts what a GPX reader has seen.
type GPXStats struct {
	Version     string // the root element's version attribute ("1.0", "1.1")
	Tracks      int    // <trk> elements returned by Scan
	Segments    int    // <trkseg> elements
	Points      int    // <trkpt> elements kept
	BadPoints   int    // <trkpt> elements skipped for a bad or missing lat or lon
	Waypoints   int    // <wpt> elements (not returned)
	RoutePoints int    // <rtept> elements (not returned)
}

// GPXReader reads the tracks of a GPX 1.0 or 1.1 file with a streaming
// XML decoder. Each point keeps lat, lon, <ele> (Alt) and <time>; the
// GPX 1.0 <speed> (m/s) and <course> (degrees) are kept where present.
// Elements of other namespaces (extensions) are skipped.
type GPXReader struct {
	issueLog
	dec   *xml.Decoder
	stats GPXStats
	trk   GPXTrack
	segs  [][]Point // storage for trk.Segments, reused
	err   error
	done  bool
	text  strings.Builder
	first bool // the root element is still to be seen
}

// NewGPXReader returns a reader of r; name is used in issues.
func NewGPXReader(r io.Reader, name string) *GPXReader {
	return &GPXReader{issueLog: issueLog{file: name}, dec: xml.NewDecoder(r), first: true}
}

// Track returns the current track, valid until the next Scan.
func (r *GPXReader) Track() *GPXTrack { return &r.trk }

// Err returns the XML or read error that stopped the reader, if any.
func (r *GPXReader) Err() error { return r.err }

// Stats returns the counts so far.
func (r *GPXReader) Stats() GPXStats { return r.stats }

func (r *GPXReader) line() int {
	l, _ := r.dec.InputPos()
	return l
}

// gpxName reports whether an element is in a GPX namespace (or none) and
// returns its local name.
func gpxName(n xml.Name) (string, bool) {
	return n.Local, n.Space == gpx10 || n.Space == gpx11 || n.Space == ""
}

// fail records a fatal error.
func (r *GPXReader) fail(err error) bool {
	r.done = true
	if err == io.EOF {
		if r.first {
			r.err = fmt.Errorf("%s: no <gpx> element", r.file)
		}
		return false
	}
	var se *xml.SyntaxError
	if errors.As(err, &se) {
		r.err = fmt.Errorf("%s:%d: xml: %s", r.file, se.Line, se.Msg)
	} else {
		r.err = fmt.Errorf("%s:%d: %w", r.file, r.line(), err)
	}
	return false
}

// Scan advances to the next <trk> and reports whether there is one.
func (r *GPXReader) Scan() bool {
	if r.done {
		return false
	}
	for {
		tok, err := r.dec.Token()
		if err != nil {
			return r.fail(err)
		}
		se, ok := tok.(xml.StartElement)
		if !ok {
			continue
		}
		local, isGPX := gpxName(se.Name)
		if r.first {
			if local != "gpx" || !isGPX {
				return r.fail(fmt.Errorf("root element is <%s>, not <gpx>", local))
			}
			r.first = false
			r.stats.Version = attr(se, "version")
			continue
		}
		switch {
		case !isGPX:
			if err := r.dec.Skip(); err != nil {
				return r.fail(err)
			}
		case local == "trk":
			if err := r.readTrack(); err != nil {
				return r.fail(err)
			}
			r.stats.Tracks++
			return true
		case local == "wpt":
			r.stats.Waypoints++
			if err := r.dec.Skip(); err != nil {
				return r.fail(err)
			}
		case local == "rtept":
			r.stats.RoutePoints++
			if err := r.dec.Skip(); err != nil {
				return r.fail(err)
			}
		}
		// Other GPX elements (metadata, bounds, rte) are descended into;
		// only wpt, rtept and trk are counted.
	}
}

func attr(se xml.StartElement, name string) string {
	for _, a := range se.Attr {
		if a.Name.Local == name && a.Name.Space == "" {
			return a.Value
		}
	}
	return ""
}

// readTrack reads a <trk> up to its end element.
func (r *GPXReader) readTrack() error {
	r.trk = GPXTrack{Number: r.stats.Tracks + 1}
	r.segs = r.segs[:0]
	for {
		tok, err := r.dec.Token()
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.EndElement:
			r.trk.Segments = r.segs
			return nil
		case xml.StartElement:
			local, isGPX := gpxName(t.Name)
			switch {
			case isGPX && local == "name":
				s, err := r.readText()
				if err != nil {
					return err
				}
				r.trk.Name = s
			case isGPX && local == "trkseg":
				if err := r.readSegment(); err != nil {
					return err
				}
			default:
				if err := r.dec.Skip(); err != nil {
					return err
				}
			}
		}
	}
}

// readText returns the character data of the current element, trimmed.
func (r *GPXReader) readText() (string, error) {
	r.text.Reset()
	for {
		tok, err := r.dec.Token()
		if err != nil {
			return "", err
		}
		switch t := tok.(type) {
		case xml.CharData:
			r.text.Write(t)
		case xml.StartElement:
			if err := r.dec.Skip(); err != nil {
				return "", err
			}
		case xml.EndElement:
			return strings.TrimSpace(r.text.String()), nil
		}
	}
}

func (r *GPXReader) readSegment() error {
	r.stats.Segments++
	k := len(r.segs)
	if k < cap(r.segs) {
		r.segs = r.segs[:k+1]
		r.segs[k] = r.segs[k][:0]
	} else {
		r.segs = append(r.segs, nil)
	}
	for {
		tok, err := r.dec.Token()
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.EndElement:
			return nil
		case xml.StartElement:
			local, isGPX := gpxName(t.Name)
			if !isGPX || local != "trkpt" {
				if err := r.dec.Skip(); err != nil {
					return err
				}
				continue
			}
			p, ok, err := r.readPoint(t)
			if err != nil {
				return err
			}
			if ok {
				r.stats.Points++
				r.segs[k] = append(r.segs[k], p)
			}
		}
	}
}

// readPoint reads a <trkpt>; ok is false if its position is unusable.
func (r *GPXReader) readPoint(se xml.StartElement) (p Point, ok bool, err error) {
	line := r.line()
	nan := math.NaN()
	p = Point{Alt: nan, SOG: nan, COG: nan, Heading: nan, HorizStd: nan}
	ok = true
	lat, err1 := strconv.ParseFloat(attr(se, "lat"), 64)
	lon, err2 := strconv.ParseFloat(attr(se, "lon"), 64)
	switch {
	case err1 != nil || math.IsNaN(lat) || lat < -90 || lat > 90:
		r.add(line, "trkpt lat", "bad value %q", attr(se, "lat"))
		ok = false
	case err2 != nil || math.IsNaN(lon) || lon < -180 || lon > 180:
		r.add(line, "trkpt lon", "bad value %q", attr(se, "lon"))
		ok = false
	}
	p.Lat, p.Lon = lat, lon
	for {
		tok, err := r.dec.Token()
		if err != nil {
			return p, false, err
		}
		switch t := tok.(type) {
		case xml.EndElement:
			if !ok {
				r.stats.BadPoints++
			}
			return p, ok, nil
		case xml.StartElement:
			local, isGPX := gpxName(t.Name)
			if !isGPX || (local != "ele" && local != "time" && local != "speed" && local != "course") {
				if err := r.dec.Skip(); err != nil {
					return p, false, err
				}
				continue
			}
			l := r.line()
			s, err := r.readText()
			if err != nil {
				return p, false, err
			}
			if local == "time" {
				t, terr := parseGPXTime(s)
				if terr != nil {
					r.add(l, "trkpt time", "bad value %q", s)
					continue
				}
				p.T = t
				continue
			}
			v, perr := strconv.ParseFloat(s, 64)
			if perr != nil || math.IsInf(v, 0) || math.IsNaN(v) {
				r.add(l, "trkpt "+local, "bad value %q", s)
				continue
			}
			switch local {
			case "ele":
				p.Alt = v
			case "speed":
				if v >= 0 {
					p.SOG = v
				}
			case "course":
				if v >= 0 && v <= 360 {
					p.COG = math.Mod(v, 360)
				}
			}
		}
	}
}

// parseGPXTime parses an xsd:dateTime; a time without a zone is taken as
// UTC, as the GPX schemas say times are UTC.
func parseGPXTime(s string) (time.Time, error) {
	t, err := time.Parse(time.RFC3339Nano, s)
	if err != nil {
		t, err = time.Parse("2006-01-02T15:04:05.999999999", s)
	}
	return t.UTC(), err
}

// ReadGPXTracks reads every track of a GPX file into Tracks, one per
// non-empty segment: ID the track's name (or "track N" if it has none),
// Part the segment's number among the track's non-empty segments. It
// returns the reader too, for its counts, issues and error.
func ReadGPXTracks(rd io.Reader, name string) ([]Track, *GPXReader) {
	r := NewGPXReader(rd, name)
	var out []Track
	for r.Scan() {
		t := r.Track()
		id := t.Name
		if id == "" {
			id = "track " + strconv.Itoa(t.Number)
		}
		part := 0
		for _, seg := range t.Segments {
			if len(seg) == 0 {
				continue
			}
			part++
			out = append(out, Track{Source: name, ID: id, Part: part, Name: t.Name,
				Points: append([]Point(nil), seg...)})
		}
	}
	return out, r
}
