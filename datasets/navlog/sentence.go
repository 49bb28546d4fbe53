package navlog

import (
	"math"
	"strconv"
	"time"
)

// SentenceCount counts the sentences of one address (such as "GPGGA").
type SentenceCount struct {
	OK          int // checksum good (or absent and allowed) and fields usable
	BadChecksum int // checksum present but wrong
	NoChecksum  int // no "*hh" checksum; skipped
	BadField    int // checksum good, but a field could not be used; skipped
}

// frame results
const (
	frameOK = iota
	frameNotSentence
	frameNoChecksum
	frameBadChecksum
)

// maxFields bounds the fields kept from one sentence; extra ones are
// ignored (no sentence handled here has more than 20).
const maxFields = 24

// splitSentence checks the framing of an NMEA 0183 sentence, "$..." or
// "!...", with its checksum "*hh" (XOR of every byte between the start
// character and '*'), and splits the part before '*' into fields at
// commas; fields[0] is the address without the start character.
func splitSentence(line []byte, fields *[maxFields][]byte) (n, status int) {
	for len(line) > 0 && (line[len(line)-1] == ' ' || line[len(line)-1] == '\t') {
		line = line[:len(line)-1]
	}
	if len(line) < 2 || (line[0] != '$' && line[0] != '!') {
		return 0, frameNotSentence
	}
	body := line[1:]
	status = frameNoChecksum
	if k := len(body) - 3; k >= 0 && body[k] == '*' {
		hi, ok1 := unhex(body[k+1])
		lo, ok2 := unhex(body[k+2])
		if ok1 && ok2 {
			var x byte
			for _, c := range body[:k] {
				x ^= c
			}
			status = frameOK
			if x != hi<<4|lo {
				status = frameBadChecksum
			}
			body = body[:k]
		}
	}
	start := 0
	for i := 0; i <= len(body); i++ {
		if i < len(body) && body[i] != ',' {
			continue
		}
		if n < maxFields {
			fields[n] = body[start:i]
			n++
		}
		start = i + 1
	}
	return n, status
}

func unhex(c byte) (byte, bool) {
	switch {
	case '0' <= c && c <= '9':
		return c - '0', true
	case 'A' <= c && c <= 'F':
		return c - 'A' + 10, true
	case 'a' <= c && c <= 'f':
		return c - 'a' + 10, true
	}
	return 0, false
}

// goodAddress reports whether an address field is 1 to 8 upper-case
// letters or digits, so it can name a counter.
func goodAddress(a []byte) bool {
	if len(a) == 0 || len(a) > 8 {
		return false
	}
	for _, c := range a {
		if !('A' <= c && c <= 'Z' || '0' <= c && c <= '9') {
			return false
		}
	}
	return true
}

// parseNum parses a plain decimal number: optional sign, digits, at most
// one '.', at least one digit; no exponent, hex, inf or nan.
func parseNum(b []byte) (float64, bool) {
	i, digits, dot := 0, 0, false
	if len(b) > 0 && (b[0] == '-' || b[0] == '+') {
		i++
	}
	for ; i < len(b); i++ {
		switch c := b[i]; {
		case '0' <= c && c <= '9':
			digits++
		case c == '.' && !dot:
			dot = true
		default:
			return 0, false
		}
	}
	if digits == 0 || digits > 30 {
		return 0, false
	}
	v, err := strconv.ParseFloat(string(b), 64)
	return v, err == nil
}

// parseInt parses unsigned decimal digits, at most 9 of them.
func parseInt(b []byte) (int, bool) {
	if len(b) == 0 || len(b) > 9 {
		return 0, false
	}
	v := 0
	for _, c := range b {
		if c < '0' || c > '9' {
			return 0, false
		}
		v = v*10 + int(c-'0')
	}
	return v, true
}

// optNum parses an optional number: NaN and true if the field is empty.
func optNum(b []byte) (float64, bool) {
	if len(b) == 0 {
		return math.NaN(), true
	}
	return parseNum(b)
}

// parseTOD parses hhmmss or hhmmss.s... into the time since midnight.
func parseTOD(b []byte) (time.Duration, bool) {
	if len(b) < 6 {
		return 0, false
	}
	h, ok1 := parseInt(b[0:2])
	m, ok2 := parseInt(b[2:4])
	s, ok3 := parseInt(b[4:6])
	if !ok1 || !ok2 || !ok3 || h > 23 || m > 59 || s > 60 {
		return 0, false
	}
	d := time.Duration(h)*time.Hour + time.Duration(m)*time.Minute + time.Duration(s)*time.Second
	if len(b) == 6 {
		return d, true
	}
	if b[6] != '.' || len(b) > 16 {
		return 0, false
	}
	scale := time.Duration(time.Second)
	for _, c := range b[7:] {
		if c < '0' || c > '9' {
			return 0, false
		}
		scale /= 10
		d += time.Duration(c-'0') * scale
	}
	return d, true
}

// parseLatLon parses NMEA (d)ddmm.mmmm with its hemisphere letter into
// degrees; maxDeg is 90 for latitude and 180 for longitude.
func parseLatLon(v, hemi []byte, maxDeg int, pos, neg byte) (float64, bool) {
	dot := len(v)
	for i, c := range v {
		if c == '.' {
			dot = i
			break
		}
	}
	if dot < 3 || dot > 5 || len(hemi) != 1 {
		return 0, false
	}
	d, ok1 := parseInt(v[:dot-2])
	m, ok2 := parseNum(v[dot-2:])
	if !ok1 || !ok2 || m >= 60 || m < 0 || (v[dot-2] == '+' || v[dot-2] == '-') {
		return 0, false
	}
	x := float64(d) + m/60
	if x > float64(maxDeg) {
		return 0, false
	}
	switch hemi[0] {
	case pos:
		return x, true
	case neg:
		return -x, true
	}
	return 0, false
}

// date is a calendar day.
type date struct{ y, m, d int }

func (d date) at(tod time.Duration) time.Time {
	return time.Date(d.y, time.Month(d.m), d.d, 0, 0, 0, 0, time.UTC).Add(tod)
}

func (d date) addDays(n int) date {
	t := time.Date(d.y, time.Month(d.m), d.d+n, 0, 0, 0, 0, time.UTC)
	return date{t.Year(), int(t.Month()), t.Day()}
}

// parseDDMMYY parses an RMC date. Two-digit years 80-99 are taken as
// 1980-1999 and 00-79 as 2000-2079 (GPS time began in 1980; common
// practice, no source).
func parseDDMMYY(b []byte) (date, bool) {
	if len(b) != 6 {
		return date{}, false
	}
	d, ok1 := parseInt(b[0:2])
	m, ok2 := parseInt(b[2:4])
	y, ok3 := parseInt(b[4:6])
	if !ok1 || !ok2 || !ok3 {
		return date{}, false
	}
	if y < 80 {
		y += 2000
	} else {
		y += 1900
	}
	return checkDate(y, m, d)
}

func checkDate(y, m, d int) (date, bool) {
	if m < 1 || m > 12 || d < 1 || d > 31 {
		return date{}, false
	}
	if t := time.Date(y, time.Month(m), d, 0, 0, 0, 0, time.UTC); t.Day() != d {
		return date{}, false
	}
	return date{y, m, d}, true
}
