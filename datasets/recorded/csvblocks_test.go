package recorded

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

const blocksMapping = `dataset = "d"
[[file]]
path = "a.csv"
skip_lines = 1
time = "t"
time_unit = "ms"
  [[file.quantity]]
  kind = "gyro"
  columns = ["gx", "gy", "gz"]
  unit = "deg/s"
  frame = "body"
`

// failingReader returns its bytes and then err.
type failingReader struct {
	r   *bytes.Reader
	err error
}

func (f *failingReader) Read(p []byte) (int, error) {
	n, err := f.r.Read(p)
	if err == io.EOF {
		return n, f.err
	}
	return n, err
}

// blocksText makes a file of rows good and bad, comments, empty and blank
// lines, LF and CRLF endings; long adds lines over maxLine.
func blocksText(rng *rand.Rand, rows int, badShare float64, long, finalNewline bool) []byte {
	values := []string{"1.5", "-0.0042603487041181585", "9.860071125378163", "6.866455E-4", "", "NaN", "-57.580566"}
	bad := []string{"x", "1e", "inf", "1e999", " 2 ", `"3"`}
	var b bytes.Buffer
	b.WriteString("logged by a survey drone\na,t,gx,note,gz,gy\n")
	for i := range rows {
		switch k := rng.IntN(40); {
		case k == 0:
			b.WriteString("# a comment")
		case k == 1:
			// an empty line
		case k == 2:
			b.WriteString("  \t")
		case long && i%100 == 50:
			b.WriteString("0," + strings.Repeat("7", maxLine+rng.IntN(3)-1))
		default:
			ms := i * 5
			if rng.IntN(50) == 0 {
				ms = rng.IntN(rows * 5) // out of order, or a duplicate time
			}
			f := []string{"0", fmt.Sprint(ms), "", "note", "", ""}
			for _, j := range []int{2, 4, 5} {
				f[j] = values[rng.IntN(len(values))]
				if rng.Float64() < badShare {
					f[j] = bad[rng.IntN(len(bad))]
				}
			}
			if rng.Float64() < badShare/4 {
				f = f[:5]
			}
			b.WriteString(strings.Join(f, ","))
		}
		if i < rows-1 || finalNewline {
			if rng.IntN(3) == 0 {
				b.WriteString("\r\n")
			} else {
				b.WriteString("\n")
			}
		}
	}
	return b.Bytes()
}

// readBoth reads src() line by line and in blocks, each after prefill
// errors of an earlier file, and reports any difference in the rows, the
// row errors or the error returned. It returns the line-by-line results.
func readBoth(t *testing.T, what string, src func() io.Reader, size int64, prefill, block, workers int) (*stream, *errs, error) {
	t.Helper()
	m := mustMapping(t, blocksMapping)
	read := func(workers int) (*stream, *errs, error) {
		e := &errs{}
		for i := range prefill {
			e.add("earlier.csv", i+1, "", "bad")
		}
		s, err := readCSVWith("a.csv", src(), size, &m.files[0], e, block, workers)
		return s, e, err
	}
	s1, e1, err1 := read(1)
	s2, e2, err2 := read(workers)
	where := fmt.Sprintf("%s, %d errors before, blocks of %d, %d workers", what, prefill, block, workers)
	if fmt.Sprint(err1) != fmt.Sprint(err2) {
		t.Fatalf("%s: error %v; line by line %v", where, err2, err1)
	}
	if fmt.Sprint(e1.list) != fmt.Sprint(e2.list) {
		t.Fatalf("%s: row errors\n%v\nline by line\n%v", where, e2.list, e1.list)
	}
	if (s1 == nil) != (s2 == nil) {
		t.Fatalf("%s: stream %v; line by line %v", where, s2, s1)
	}
	if s1 == nil {
		return s1, e1, err1
	}
	if !slices.Equal(s1.t, s2.t) || !slices.Equal(s1.lines, s2.lines) || s1.sorted != s2.sorted {
		t.Fatalf("%s: %d rows (sorted %v), line by line %d (sorted %v)", where, len(s2.t), s2.sorted, len(s1.t), s1.sorted)
	}
	for i := range s1.cols {
		if !equalBits(s1.cols[i].Values, s2.cols[i].Values) {
			t.Fatalf("%s: column %s differs", where, s1.cols[i].Name)
		}
	}
	return s1, e1, err1
}

// TestBlocksMatchLines checks that reading in blocks on several goroutines
// gives what reading line by line gives (the reference, which the other
// tests check against expected contents): the same rows bit for bit with
// their lines, the same errors in the same order, and the same stop where
// the errors fill up or the input fails.
func TestBlocksMatchLines(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for _, c := range []struct {
		name         string
		rows         int
		bad          float64
		long, finalN bool
	}{
		{"clean", 3000, 0, false, true},
		{"clean, no final newline", 3000, 0, false, false},
		{"some bad rows", 3000, 0.01, false, true},
		{"many bad rows", 3000, 0.2, false, false},
		{"long lines", 400, 0.01, true, true},
		{"long lines, no final newline", 400, 0, true, false},
		{"header only", 0, 0, false, true},
	} {
		text := blocksText(rng, c.rows, c.bad, c.long, c.finalN)
		for _, prefill := range []int{0, 30, maxErrors - 1, maxErrors} {
			for _, block := range []int{64, 1000, 1 << 16} {
				for _, workers := range []int{2, 3} {
					s, e, err := readBoth(t, c.name, func() io.Reader { return bytes.NewReader(text) }, int64(len(text)), prefill, block, workers)
					// What the reference gives, so that the comparison
					// covers each case.
					longs := 0
					for _, l := range e.list {
						if l.Msg == errLongLine.Error() {
							longs++
						}
					}
					switch {
					case err != nil:
						t.Fatalf("%s: %v", c.name, err)
					case prefill == maxErrors && len(s.t) != 0:
						t.Fatalf("%s: %d rows read after the errors were full", c.name, len(s.t))
					case prefill == 0 && c.rows > 0 && c.bad < 0.1 && len(s.t) < c.rows/2:
						t.Fatalf("%s: %d rows", c.name, len(s.t))
					case prefill == 0 && c.long && longs < 3:
						t.Fatalf("%s: %d long lines reported", c.name, longs)
					case prefill == 0 && c.bad >= 0.2 && len(e.list) != maxErrors+1:
						t.Fatalf("%s: %d errors, want a stop after %d", c.name, len(e.list), maxErrors)
					}
					// The input fails part of the way through, in the
					// middle of a line or after one.
					cut := len(text) * 2 / 3
					fail := errors.New("device gone")
					_, e, err = readBoth(t, c.name+", failing", func() io.Reader {
						return &failingReader{bytes.NewReader(text[:cut]), fail}
					}, int64(len(text)), prefill, block, workers)
					if !errors.Is(err, fail) && !e.full() {
						t.Fatalf("%s, failing: %v, want the read error", c.name, err)
					}
				}
			}
		}
	}
}

// TestBlocksLargeFile reads a file large enough for readCSV to use blocks
// (four blocks or more) and checks it against the line-by-line reading.
func TestBlocksLargeFile(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	text := blocksText(rng, 250000, 0.00002, false, true)
	if len(text) < 4*blockSize {
		t.Fatalf("%d bytes, want %d or more", len(text), 4*blockSize)
	}
	s, _, err := readBoth(t, "large", func() io.Reader { return bytes.NewReader(text) }, int64(len(text)), 0, blockSize, 2)
	if err != nil || len(s.t) < 200000 {
		t.Fatalf("%v, want 200,000 rows or more", err)
	}
}
