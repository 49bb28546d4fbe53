package recorded

import (
	"bytes"
	"fmt"
	"io"
	"math"
)

const (
	// blockSize is the bytes of whole lines a worker parses at a time,
	// small enough for a block and its rows to stay in cache. A block
	// grows to hold a longer line, up to maxLine.
	blockSize = 256 << 10
	// maxWorkers bounds the goroutines that parse blocks of one file.
	maxWorkers = 4
)

// block is a run of whole lines of a file and, once parsed, its rows.
// Blocks are reused: a file's read goes round a fixed set of them.
type block struct {
	seq  int
	buf  []byte // the bytes read; data and the start of the next block
	data []byte // whole lines, the last one ending the file or in '\n'
	long bool   // instead of data: one line longer than maxLine, skipped
	last bool   // the last block of the file
	err  error  // a read error after data

	// Set by parse. Lines are counted from 1 at the block's start.
	lines int         // the lines of data
	t     []int64     // time of each row
	line  []int32     // line of each row
	vals  [][]float64 // the output columns
	bad   []badRow
}

// badRow is a row error at a line of a block.
type badRow struct {
	line       int32
	field, msg string
}

// readBlocks reads the rest of the file after the header: one goroutine
// reads blocks of whole lines, workers parse them with their own copy of
// c, and the calling goroutine appends their rows and errors to s and e
// in file order, stopping where e fills as the line-by-line reading does.
// The goroutines have all ended when it returns.
func (c *csvReader) readBlocks(s *stream, size int64, e *errs, blockLen, workers int) (*stream, error) {
	if e.full() {
		return s, nil
	}
	n := 2 * workers // blocks in circulation
	free := make(chan *block, n)
	work := make(chan *block, n)
	done := make(chan *block, n)
	stop := make(chan struct{})
	for range n {
		free <- &block{vals: make([][]float64, len(c.fm.outs))}
	}
	go readLines(c.lr.r, blockLen, free, work, stop)
	finished := make(chan struct{})
	for range workers {
		w := *c
		w.fields, w.vals = nil, make([]float64, len(c.vals))
		go func() {
			for b := range work {
				w.parse(b)
				done <- b
			}
			finished <- struct{}{}
		}()
	}
	go func() {
		for range workers {
			<-finished
		}
		close(done)
	}()

	base := c.lr.line            // lines before the block being merged
	read := c.lr.read            // bytes before it
	pending := make([]*block, n) // parsed blocks by seq mod n
	next, stopped, sized := 0, false, false
	var rerr error
	for b := range done {
		pending[b.seq%n] = b
		for p := pending[next%n]; p != nil && p.seq == next; p = pending[next%n] {
			pending[next%n] = nil
			next++
			if !stopped {
				ok := c.merge(s, p, base, e)
				base += p.lines
				read += int64(len(p.data))
				if !sized && size > read && len(s.t) > 0 {
					// Estimate the rows from the bytes per line so far, 5 % over.
					per := float64(read) / float64(base)
					s.grow(int(float64(size-read)/per*1.05) + 64)
					sized = true
				}
				if ok && p.err != nil {
					rerr, ok = p.err, false
				}
				if !ok || p.last {
					stopped = true
					close(stop)
				}
			}
			free <- p
		}
	}
	if rerr != nil {
		return nil, fmt.Errorf("recorded: %s: %w", c.name, rerr)
	}
	return s, nil
}

// readLines sends blocks of whole lines of src to work until the end of
// src, a read error or stop, and then closes work. A line longer than
// maxLine goes as a block of its own, marked long, without its bytes.
func readLines(src io.Reader, blockLen int, free <-chan *block, work chan<- *block, stop <-chan struct{}) {
	defer close(work)
	var tail []byte // the start of a line the last block cut
	for seq := 0; ; seq++ {
		var b *block
		select {
		case b = <-free:
		case <-stop:
			return
		}
		b.seq, b.data, b.long, b.last, b.err = seq, nil, false, false, nil
		if need := max(blockLen, 2*len(tail)); len(b.buf) < need {
			b.buf = make([]byte, need)
		}
		n := copy(b.buf, tail) // the tail may lie in b.buf itself: copy moves it
		tail = nil
		var err error
		for {
			var m int
			m, err = io.ReadFull(src, b.buf[n:])
			n += m
			if err != nil || len(b.buf) > maxLine || bytes.IndexByte(b.buf[n-m:n], '\n') >= 0 {
				break
			}
			// One line fills a block smaller than maxLine: make room.
			b.buf = append(b.buf, make([]byte, len(b.buf))...)
		}
		end := bytes.LastIndexByte(b.buf[:n], '\n') + 1
		switch {
		case err == io.EOF || err == io.ErrUnexpectedEOF:
			b.data, b.last = b.buf[:n], true
		case err != nil:
			b.data, b.last, b.err = b.buf[:end], true, err
		case end > 0:
			b.data, tail = b.buf[:end], b.buf[end:n]
		default: // a line longer than maxLine
			b.long = true
			tail, err = skipLine(src, b.buf)
			if err == io.EOF {
				b.last = true
			} else if err != nil {
				// The line-by-line reading reports the read error alone.
				b.long, b.last, b.err = false, true, err
			}
		}
		work <- b
		if b.last {
			return
		}
	}
}

// skipLine reads src up to the next '\n' and returns what follows it in
// buf; at the end of src it returns io.EOF.
func skipLine(src io.Reader, buf []byte) ([]byte, error) {
	for {
		n, err := io.ReadFull(src, buf)
		if i := bytes.IndexByte(buf[:n], '\n'); i >= 0 {
			return buf[i+1 : n], nil
		}
		if err == io.EOF || err == io.ErrUnexpectedEOF {
			return nil, io.EOF
		}
		if err != nil {
			return nil, err
		}
	}
}

// parse reads the lines of b into its rows and errors, as the
// line-by-line reading does: lines end in LF or CRLF, one longer than
// maxLine is an error. It stops after maxErrors errors, which fill e.
func (c *csvReader) parse(b *block) {
	b.lines, b.t, b.line, b.bad = 0, b.t[:0], b.line[:0], b.bad[:0]
	for i := range b.vals {
		b.vals[i] = b.vals[i][:0]
	}
	if cap(b.t) == 0 {
		// The first use of b: room for as many rows as lines.
		n := bytes.Count(b.data, []byte{'\n'}) + 1
		b.t, b.line = make([]int64, 0, n), make([]int32, 0, n)
		for i := range b.vals {
			b.vals[i] = make([]float64, 0, n)
		}
	}
	if b.long {
		b.lines = 1
		b.bad = append(b.bad, badRow{1, "", errLongLine.Error()})
		return
	}
	data := b.data
	for len(data) > 0 && len(b.bad) < maxErrors {
		var line []byte
		if i := bytes.IndexByte(data, '\n'); i >= 0 {
			line, data = data[:i+1], data[i+1:]
		} else {
			line, data = data, nil
		}
		b.lines++
		n := int32(min(b.lines, math.MaxInt32))
		if len(line) > maxLine {
			b.bad = append(b.bad, badRow{n, "", errLongLine.Error()})
			continue
		}
		line = trimEnding(line)
		t, ok, field, msg := c.row(line)
		switch {
		case ok:
			b.t = append(b.t, t)
			b.line = append(b.line, n)
			for i, v := range c.vals {
				b.vals[i] = append(b.vals[i], v)
			}
		case msg != "":
			b.bad = append(b.bad, badRow{n, field, msg})
		}
	}
}

// merge appends the rows and errors of b, whose first line follows line
// base, to s and e in line order. It reports false where e fills: the
// rows after that line are left out, as the line-by-line reading stops
// there.
func (c *csvReader) merge(s *stream, b *block, base int, e *errs) bool {
	r := 0
	for _, bad := range b.bad {
		end := r
		for end < len(b.line) && b.line[end] < bad.line {
			end++
		}
		appendRows(s, b, r, end, base)
		r = end
		if !e.add(c.name, base+int(bad.line), bad.field, bad.msg) {
			return false
		}
	}
	appendRows(s, b, r, len(b.t), base)
	return true
}

// appendRows appends rows [from, to) of b to s, as s.add would one by one.
func appendRows(s *stream, b *block, from, to, base int) {
	if from == to {
		return
	}
	prev := int64(math.MinInt64)
	if n := len(s.t); n > 0 {
		prev = s.t[n-1]
	}
	for _, t := range b.t[from:to] {
		if t < prev {
			s.sorted = false
		}
		prev = t
	}
	s.t = append(s.t, b.t[from:to]...)
	for _, l := range b.line[from:to] {
		s.lines = append(s.lines, int32(min(base+int(l), math.MaxInt32)))
	}
	for i := range s.cols {
		s.cols[i].Values = append(s.cols[i].Values, b.vals[i][from:to]...)
	}
}
