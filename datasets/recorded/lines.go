package recorded

import (
	"bufio"
	"errors"
	"io"
	"math"
	"math/bits"
	"strconv"
)

// maxLine is the longest line a loader accepts.
const maxLine = 1 << 20

// errLongLine is returned by lineReader.next for a line over maxLine bytes.
var errLongLine = errors.New("line longer than 1 MiB")

// lineReader reads lines without copying them: a line is valid until the
// next call. It strips the line ending (LF or CRLF).
type lineReader struct {
	r    *bufio.Reader
	line int    // number of the last line returned, 1-based
	long []byte // assembles a line longer than the buffer
	read int64  // bytes consumed so far
}

func newLineReader(r io.Reader) *lineReader {
	return &lineReader{r: bufio.NewReaderSize(r, 256<<10)}
}

// next returns the next line; at the end of input it returns io.EOF. A line
// too long is skipped whole and reported as errLongLine.
func (l *lineReader) next() ([]byte, error) {
	b, err := l.r.ReadSlice('\n')
	if err == bufio.ErrBufferFull {
		l.long = append(l.long[:0], b...)
		for err == bufio.ErrBufferFull {
			b, err = l.r.ReadSlice('\n')
			if len(l.long) <= maxLine {
				l.long = append(l.long, b...)
			}
		}
		b = l.long
	}
	l.read += int64(len(b))
	if len(b) == 0 && err != nil {
		return nil, err
	}
	if err != nil && err != io.EOF {
		return nil, err
	}
	l.line++
	if len(b) > maxLine {
		return nil, errLongLine
	}
	return trimEnding(b), nil
}

// trimEnding removes a line's LF or CRLF ending, if it has one.
func trimEnding(b []byte) []byte {
	if n := len(b); n > 0 && b[n-1] == '\n' {
		b = b[:n-1]
	}
	if n := len(b); n > 0 && b[n-1] == '\r' {
		b = b[:n-1]
	}
	return b
}

// trimField removes spaces and tabs around a field and one pair of double
// quotes enclosing it.
func trimField(b []byte) []byte {
	for len(b) > 0 && (b[0] == ' ' || b[0] == '\t') {
		b = b[1:]
	}
	for len(b) > 0 && (b[len(b)-1] == ' ' || b[len(b)-1] == '\t') {
		b = b[:len(b)-1]
	}
	if len(b) >= 2 && b[0] == '"' && b[len(b)-1] == '"' {
		b = b[1 : len(b)-1]
	}
	return b
}

// parseValue parses a decimal float. An empty field and NaN (any case)
// read as missing (NaN, true); infinities and anything else are errors.
func parseValue(b []byte) (float64, error) {
	if len(b) == 0 {
		return math.NaN(), nil
	}
	if v, ok := parseFloat(b); ok {
		return v, nil
	}
	// Other forms, and the cases the fast paths leave in doubt. The
	// conversion does not allocate for short fields: ParseFloat does not
	// keep its argument (the benchmarks report the allocations).
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		if ne, ok := err.(*strconv.NumError); ok && ne.Err == strconv.ErrRange {
			return 0, errors.New("number out of range: " + strconv.Quote(string(b)))
		}
		return 0, errors.New("not a number: " + quoteShort(b))
	}
	if math.IsInf(v, 0) {
		return 0, errors.New("not finite: " + quoteShort(b))
	}
	return v, nil
}

// quoteShort quotes b, cut to 40 bytes.
func quoteShort(b []byte) string {
	if len(b) > 40 {
		return strconv.Quote(string(b[:40])) + "..."
	}
	return strconv.Quote(string(b))
}

// Time units: nanoseconds per unit.
var timeUnits = map[string]int64{"s": 1e9, "ms": 1e6, "us": 1e3, "ns": 1}

var pow10 = [...]uint64{1, 10, 100, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12,
	1e13, 1e14, 1e15, 1e16, 1e17, 1e18, 1e19}

// parseTime parses a decimal time in a unit of perUnit nanoseconds into
// integer nanoseconds, exactly up to 19 significant digits (further digits
// are dropped) and rounded half away from zero to the nanosecond. It takes
// an optional sign, a fraction and an exponent (1.4036E+018).
func parseTime(b []byte, perUnit int64) (int64, error) {
	bad := func() (int64, error) { return 0, errors.New("not a time: " + quoteShort(b)) }
	s := b
	neg := false
	if len(s) > 0 && (s[0] == '+' || s[0] == '-') {
		neg = s[0] == '-'
		s = s[1:]
	}
	var mant uint64
	exp, ndig, sig := 0, 0, 0 // decimal exponent, digits seen, significant digits kept
	dot := false
	for ; len(s) > 0; s = s[1:] {
		c := s[0]
		switch {
		case c >= '0' && c <= '9':
			ndig++
			if sig < 19 && (mant > 0 || c != '0') {
				mant = mant*10 + uint64(c-'0')
				sig++
				if dot {
					exp--
				}
			} else if sig > 0 && !dot {
				exp++ // an integer digit beyond 19 significant ones
			} else if sig == 0 && dot {
				exp-- // a leading zero of the fraction
			}
			continue
		case c == '.' && !dot:
			dot = true
			continue
		}
		break
	}
	if ndig == 0 {
		return bad()
	}
	if len(s) > 0 {
		if s[0] != 'e' && s[0] != 'E' || len(s) == 1 {
			return bad()
		}
		s = s[1:]
		eneg := false
		if s[0] == '+' || s[0] == '-' {
			eneg = s[0] == '-'
			s = s[1:]
		}
		if len(s) == 0 || len(s) > 4 {
			return bad()
		}
		e := 0
		for _, c := range s {
			if c < '0' || c > '9' {
				return bad()
			}
			e = e*10 + int(c-'0')
		}
		if eneg {
			e = -e
		}
		exp += e
	}
	// value = mant * 10^exp units = mant * 10^exp * perUnit ns
	for p := perUnit; p > 1; p /= 10 {
		exp++
	}
	var ns uint64
	switch {
	case mant == 0:
		ns = 0
	case exp >= 0:
		if exp >= len(pow10) {
			return 0, errors.New("time out of range: " + quoteShort(b))
		}
		hi, lo := bits.Mul64(mant, pow10[exp])
		if hi != 0 || lo > math.MaxInt64 {
			return 0, errors.New("time out of range: " + quoteShort(b))
		}
		ns = lo
	case -exp >= len(pow10):
		ns = 0
	default:
		d := pow10[-exp]
		ns = mant / d
		if mant%d >= (d+1)/2 {
			ns++
		}
	}
	if neg {
		return -int64(ns), nil
	}
	return int64(ns), nil
}
