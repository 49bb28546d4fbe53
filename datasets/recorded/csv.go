package recorded

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strconv"
	"strings"
)

// LoadCSV reads the files a mapping names into one recording, joined on
// time: a row for every distinct time of any file, null where a file has
// no sample. When path is a folder the mapping's paths are relative to it;
// when it is a file, the mapping must name exactly one file, which is read
// from path. The sequence id is the mapping's, or the base name of path.
//
// When rows were skipped LoadCSV returns the recording of the good rows
// and an ErrorList; on other errors (a file missing, a header without a
// mapped column) it returns nil and the error.
func LoadCSV(m *Mapping, path string) (*Recording, error) {
	fi, err := os.Stat(path)
	if err != nil {
		return nil, fmt.Errorf("recorded: %w", err)
	}
	paths := make([]string, len(m.files))
	seq := filepath.Base(path)
	if fi.IsDir() {
		for i, f := range m.files {
			paths[i] = f.path
			if !filepath.IsAbs(f.path) {
				paths[i] = filepath.Join(path, filepath.FromSlash(f.path))
			}
		}
	} else {
		if len(m.files) != 1 {
			return nil, &LoadError{File: m.file, Field: "file", Msg: fmt.Sprintf("the mapping names %d files; give the folder that holds them, not %s", len(m.files), path)}
		}
		paths[0] = path
		seq = strings.TrimSuffix(seq, filepath.Ext(seq))
	}
	var e errs
	streams := make([]*stream, len(m.files))
	for i := range m.files {
		s, err := loadCSVFile(paths[i], &m.files[i], &e)
		if err != nil {
			return nil, err
		}
		streams[i] = s
	}
	meta := m.meta
	if meta.Sequence == "" {
		meta.Sequence = seq
	}
	return finish(m.file, meta, streams, m.unixTime, 0, &e)
}

func loadCSVFile(path string, fm *fileMapping, e *errs) (*stream, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("recorded: %w", err)
	}
	defer f.Close()
	var size int64
	if fi, err := f.Stat(); err == nil {
		size = fi.Size()
	}
	return readCSV(path, f, size, fm, e)
}

// finish orders the streams, joins them and checks the result. Times
// count from 0 of the source's time base, or with unix time from origin,
// or from the first sample when origin is 0.
func finish(file string, meta Meta, streams []*stream, unix bool, origin int64, e *errs) (*Recording, error) {
	if !unix {
		origin = 0
	} else if origin == 0 {
		first := int64(math.MaxInt64)
		for _, s := range streams {
			if len(s.t) > 0 {
				first = min(first, slices.Min(s.t))
			}
		}
		if first != math.MaxInt64 {
			origin = first
		}
	}
	for _, s := range streams {
		s.order(e, origin)
	}
	rec := assemble(meta, streams, origin, unix)
	if err := rec.Validate(); err != nil {
		panic("recorded: assembled an invalid recording: " + err.Error())
	}
	return rec, e.err()
}

// csvReader reads the rows of one delimited file under a file mapping.
type csvReader struct {
	name   string
	fm     *fileMapping
	lr     *lineReader
	nfield int   // fields of the header
	tcol   int   // index of the time field
	src    []int // index of the field of each output column
	hdr    []string
	fields [][]byte  // fields of the current line, reused
	vals   []float64 // values of the current line, reused
	// slot is, for each field of the header, the output column its value
	// goes to, slotTime or slotNone; fast says fastRow may read the lines.
	slot []int
	fast bool
}

const (
	slotTime = -1 // the time field
	slotNone = -2 // a field no output reads
)

// readCSV reads one file; size, if known, pre-sizes the columns. Row
// errors go to e; the error returned is an I/O error or a header that
// lacks a mapped column. A file of 4 blocks or more is read in blocks
// by as many goroutines as GOMAXPROCS allows (at most maxWorkers); the
// result is the same, error for error, as reading it line by line.
func readCSV(name string, r io.Reader, size int64, fm *fileMapping, e *errs) (*stream, error) {
	workers := 1
	if size >= 4*blockSize {
		workers = min(runtime.GOMAXPROCS(0), maxWorkers)
	}
	return readCSVWith(name, r, size, fm, e, blockSize, workers)
}

// readCSVWith is readCSV with the block size and the number of workers;
// one worker reads the file line by line on the calling goroutine.
func readCSVWith(name string, r io.Reader, size int64, fm *fileMapping, e *errs, block, workers int) (*stream, error) {
	c := &csvReader{name: name, fm: fm, lr: newLineReader(r)}
	if err := c.header(); err != nil {
		return nil, err
	}
	cols := make([]Column, len(fm.outs))
	for i, o := range fm.outs {
		cols[i] = o.col
	}
	s := newStream(fm.sensor, name, cols)
	c.vals = make([]float64, len(fm.outs))
	if workers > 1 {
		return c.readBlocks(s, size, e, block, workers)
	}
	sized := false
	for !e.full() {
		line, err := c.lr.next()
		if err == io.EOF {
			break
		}
		if err == errLongLine {
			e.add(name, c.lr.line, "", err.Error())
			continue
		}
		if err != nil {
			return nil, fmt.Errorf("recorded: %s: %w", name, err)
		}
		if t, ok, field, msg := c.row(line); ok {
			s.add(t, c.lr.line, c.vals)
		} else if msg != "" {
			e.add(name, c.lr.line, field, msg)
		}
		if !sized && len(s.t) == 64 && size > c.lr.read {
			// Estimate the rows from the bytes per row so far, 5 % over.
			per := float64(c.lr.read) / float64(c.lr.line)
			s.grow(int(float64(size-c.lr.read)/per*1.05) + 64)
			sized = true
		}
	}
	return s, nil
}

// header skips the preamble and reads the header line.
func (c *csvReader) header() error {
	for {
		line, err := c.lr.next()
		if err == io.EOF {
			return &LoadError{File: c.name, Line: max(c.lr.line, 1), Msg: "no header line"}
		}
		if err != nil {
			if err == errLongLine {
				return &LoadError{File: c.name, Line: c.lr.line, Msg: err.Error()}
			}
			return fmt.Errorf("recorded: %s: %w", c.name, err)
		}
		if c.lr.line <= c.fm.skipLines || len(bytes.TrimSpace(line)) == 0 {
			continue
		}
		line = bytes.TrimPrefix(bytes.TrimLeft(line, " \t"), []byte{'#'})
		line = bytes.TrimPrefix(line, []byte("\xef\xbb\xbf")) // a byte order mark
		c.fields = splitFields(c.fields[:0], line, c.fm.delim)
		c.nfield = len(c.fields)
		c.hdr = make([]string, len(c.fields))
		for i, f := range c.fields {
			c.hdr[i] = string(f)
		}
		break
	}
	find := func(name string) int {
		for i, h := range c.hdr {
			if h == name {
				return i
			}
		}
		for i, h := range c.hdr {
			if j := strings.LastIndex(h, " ["); j > 0 && strings.HasSuffix(h, "]") && strings.TrimSpace(h[:j]) == name {
				return i
			}
		}
		return -1
	}
	var missing ErrorList
	if c.tcol = find(c.fm.time); c.tcol < 0 {
		missing = append(missing, c.noColumn(c.fm.time))
	}
	c.src = make([]int, len(c.fm.outs))
	for i, o := range c.fm.outs {
		if c.src[i] = find(o.src); c.src[i] < 0 {
			missing = append(missing, c.noColumn(o.src))
		}
	}
	if len(missing) > 0 {
		return missing
	}
	// fastRow needs each field read at most once and a delimiter that
	// cannot be part of a number.
	c.slot = make([]int, c.nfield)
	for i := range c.slot {
		c.slot[i] = slotNone
	}
	c.slot[c.tcol] = slotTime
	c.fast = !strings.ContainsRune("0123456789+-.eE", rune(c.fm.delim))
	for i, si := range c.src {
		c.fast = c.fast && c.slot[si] == slotNone
		c.slot[si] = i
	}
	return nil
}

func (c *csvReader) noColumn(name string) *LoadError {
	return &LoadError{File: c.name, Line: c.lr.line, Field: name,
		Msg: "no such column in the header" + suggest(name, c.hdr) + " (columns: " + strings.Join(c.hdr, ", ") + ")"}
}

// row parses one data line into the time and c.vals and reports whether
// it is a row. A bad row also returns the field (empty for the whole
// line) and the message of its error; empty lines and comments return
// neither.
func (c *csvReader) row(line []byte) (t int64, ok bool, field, msg string) {
	if len(line) == 0 || line[0] == '#' {
		return 0, false, "", ""
	}
	if c.fast {
		if t, ok := c.fastRow(line); ok {
			return t, true, "", ""
		}
	}
	c.fields = splitFields(c.fields[:0], line, c.fm.delim)
	if len(c.fields) != c.nfield {
		if len(c.fields) == 1 && len(bytes.TrimSpace(line)) == 0 {
			return 0, false, "", ""
		}
		return 0, false, "", strconv.Itoa(len(c.fields)) + " fields; the header has " + strconv.Itoa(c.nfield)
	}
	tf := c.fields[c.tcol]
	if len(tf) == 0 {
		return 0, false, c.hdr[c.tcol], "no time"
	}
	t, err := parseTime(tf, c.fm.perUnit)
	if err != nil {
		return 0, false, c.hdr[c.tcol], err.Error()
	}
	for i, si := range c.src {
		v, err := parseValue(c.fields[si])
		if err != nil {
			return 0, false, c.hdr[si], err.Error()
		}
		if s := c.fm.outs[i].scale; s != 1 {
			v *= s
		}
		c.vals[i] = v
	}
	return t, true, "", ""
}

// fastRow reads a line whose fields are plain: the right number of them,
// each a number or empty with nothing around it, and a good time. It reads
// the line in one pass, each number straight from the line, and reports
// false for any other line, which row then reads field by field; a line
// gives the same values either way (parseValue uses the same parseFloat),
// and its errors come from row alone.
func (c *csvReader) fastRow(line []byte) (int64, bool) {
	var t int64
	last := len(c.slot) - 1
	delim := c.fm.delim
	rest := line
	for k, slot := range c.slot {
		if slot >= 0 {
			v := math.NaN() // an empty field
			if len(rest) > 0 && rest[0] != delim {
				var n int
				var ok bool
				if v, n, ok = parseFloatPrefix(rest); !ok {
					return 0, false
				}
				rest = rest[n:]
			}
			if s := c.fm.outs[slot].scale; s != 1 {
				v *= s
			}
			c.vals[slot] = v
		} else {
			n := bytes.IndexByte(rest, delim)
			if n < 0 {
				n = len(rest)
			}
			if slot == slotTime {
				var err error
				if t, err = parseTime(rest[:n], c.fm.perUnit); err != nil || n == 0 {
					return 0, false
				}
			}
			rest = rest[n:]
		}
		if k == last {
			return t, len(rest) == 0
		}
		if len(rest) == 0 || rest[0] != delim {
			return 0, false
		}
		rest = rest[1:]
	}
	return t, true
}

// splitFields appends the trimmed fields of line to dst.
func splitFields(dst [][]byte, line []byte, delim byte) [][]byte {
	for {
		i := bytes.IndexByte(line, delim)
		if i < 0 {
			return append(dst, trimField(line))
		}
		dst = append(dst, trimField(line[:i]))
		line = line[i+1:]
	}
}
