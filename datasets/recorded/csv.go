package recorded

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
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
	e      *errs
	nfield int   // fields of the header
	tcol   int   // index of the time field
	src    []int // index of the field of each output column
	hdr    []string
	fields [][]byte  // fields of the current line, reused
	vals   []float64 // values of the current line, reused
}

// readCSV reads one file; size, if known, pre-sizes the columns. Row
// errors go to e; the error returned is an I/O error or a header that
// lacks a mapped column.
func readCSV(name string, r io.Reader, size int64, fm *fileMapping, e *errs) (*stream, error) {
	c := &csvReader{name: name, fm: fm, lr: newLineReader(r), e: e}
	if err := c.header(); err != nil {
		return nil, err
	}
	cols := make([]Column, len(fm.outs))
	for i, o := range fm.outs {
		cols[i] = o.col
	}
	s := newStream(fm.sensor, name, cols)
	c.vals = make([]float64, len(fm.outs))
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
		if t, ok := c.row(line); ok {
			s.add(t, c.lr.line, c.vals)
		}
		if !sized && len(s.t) == 64 && size > 0 {
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
	return nil
}

func (c *csvReader) noColumn(name string) *LoadError {
	return &LoadError{File: c.name, Line: c.lr.line, Field: name,
		Msg: "no such column in the header" + suggest(name, c.hdr) + " (columns: " + strings.Join(c.hdr, ", ") + ")"}
}

// row parses one data line into the time and c.vals. It reports false for
// lines to skip: empty lines, comments and bad rows (recorded in c.e).
func (c *csvReader) row(line []byte) (int64, bool) {
	if len(line) == 0 || line[0] == '#' {
		return 0, false
	}
	c.fields = splitFields(c.fields[:0], line, c.fm.delim)
	if len(c.fields) != c.nfield {
		if len(c.fields) == 1 && len(bytes.TrimSpace(line)) == 0 {
			return 0, false
		}
		c.e.add(c.name, c.lr.line, "", strconv.Itoa(len(c.fields))+" fields; the header has "+strconv.Itoa(c.nfield))
		return 0, false
	}
	tf := c.fields[c.tcol]
	if len(tf) == 0 {
		c.e.add(c.name, c.lr.line, c.hdr[c.tcol], "no time")
		return 0, false
	}
	t, err := parseTime(tf, c.fm.perUnit)
	if err != nil {
		c.e.add(c.name, c.lr.line, c.hdr[c.tcol], err.Error())
		return 0, false
	}
	for i, si := range c.src {
		v, err := parseValue(c.fields[si])
		if err != nil {
			c.e.add(c.name, c.lr.line, c.hdr[si], err.Error())
			return 0, false
		}
		if s := c.fm.outs[i].scale; s != 1 {
			v *= s
		}
		c.vals[i] = v
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
