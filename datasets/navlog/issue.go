package navlog

import (
	"bufio"
	"errors"
	"fmt"
	"io"
)

// Issue is a problem with one line or field of the input; the reader
// skipped what it could not use and went on.
type Issue struct {
	File  string
	Line  int    // 1-based line number
	Field string // the field or part of the line at fault
	Msg   string
}

// Error returns the issue as "file:line: field: message".
func (e Issue) Error() string {
	return fmt.Sprintf("%s:%d: %s: %s", e.File, e.Line, e.Field, e.Msg)
}

// maxIssues is how many issues a reader keeps; the rest are only counted.
const maxIssues = 100

// issueLog keeps the first maxIssues issues of one input and counts all.
type issueLog struct {
	file string
	list []Issue
	n    int
}

func (l *issueLog) add(line int, field, format string, args ...any) {
	l.n++
	if len(l.list) < maxIssues {
		l.list = append(l.list, Issue{l.file, line, field, fmt.Sprintf(format, args...)})
	}
}

// Issues returns the first 100 issues found so far, in input order.
func (l *issueLog) Issues() []Issue { return l.list }

// NumIssues returns the number of issues found so far.
func (l *issueLog) NumIssues() int { return l.n }

// lineReader yields the lines of an input without their line endings,
// reusing one buffer; a line longer than the buffer is skipped whole.
type lineReader struct {
	br   *bufio.Reader
	line int   // number of the line last returned
	err  error // first read error other than io.EOF
	eof  bool
}

// maxLine is the longest line kept; longer lines are skipped and reported.
const maxLine = 64 << 10

func newLineReader(r io.Reader) lineReader {
	return lineReader{br: bufio.NewReaderSize(r, maxLine)}
}

// next returns the next line, with trailing "\r\n" or "\n" (and any
// further trailing '\r') removed, valid until the next call. tooLong
// reports a line that did not fit the buffer; it is returned empty. ok is
// false at the end of input or after a read error.
func (l *lineReader) next() (line []byte, tooLong, ok bool) {
	if l.eof {
		return nil, false, false
	}
	b, err := l.br.ReadSlice('\n')
	if errors.Is(err, bufio.ErrBufferFull) {
		for errors.Is(err, bufio.ErrBufferFull) {
			_, err = l.br.ReadSlice('\n')
		}
		l.line++
		l.end(err)
		return nil, true, true
	}
	if err != nil {
		l.end(err)
		if len(b) == 0 {
			return nil, false, false
		}
	}
	l.line++
	for len(b) > 0 && (b[len(b)-1] == '\n' || b[len(b)-1] == '\r') {
		b = b[:len(b)-1]
	}
	return b, false, true
}

func (l *lineReader) end(err error) {
	if err == nil {
		return
	}
	l.eof = true
	if err != io.EOF {
		l.err = err
	}
}
