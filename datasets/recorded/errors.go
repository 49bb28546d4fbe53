package recorded

import (
	"sort"
	"strconv"
	"strings"
)

// maxErrors is the number of row errors after which a loader stops reading.
const maxErrors = 50

// LoadError is a mistake in a data or mapping file.
type LoadError struct {
	File  string
	Line  int    // 1-based; 0 when the mistake has no single line
	Field string // column or key; empty when the whole line is wrong
	Msg   string
}

func (e *LoadError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		b.WriteString(":" + strconv.Itoa(e.Line))
	}
	b.WriteString(": ")
	if e.Field != "" {
		b.WriteString(e.Field + ": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// ErrorList is the row errors of one load, in file order.
type ErrorList []*LoadError

// errorListShown is the number of errors Error spells out.
const errorListShown = 10

func (l ErrorList) Error() string {
	var b strings.Builder
	for i, e := range l {
		if i == errorListShown {
			b.WriteString("\n(and " + strconv.Itoa(len(l)-i) + " more)")
			break
		}
		if i > 0 {
			b.WriteByte('\n')
		}
		b.WriteString(e.Error())
	}
	return b.String()
}

// errs collects the row errors of one load.
type errs struct {
	list ErrorList
}

// add records an error and reports whether the loader may go on.
func (c *errs) add(file string, line int, field, msg string) bool {
	if len(c.list) >= maxErrors {
		return false
	}
	c.list = append(c.list, &LoadError{File: file, Line: line, Field: field, Msg: msg})
	if len(c.list) == maxErrors {
		c.list = append(c.list, &LoadError{File: file, Line: line, Msg: "too many errors; stopped reading"})
		return false
	}
	return true
}

func (c *errs) full() bool { return len(c.list) >= maxErrors }

// err returns the list in file order (files in the order first seen,
// then by line), or nil when it is empty.
func (c *errs) err() error {
	if len(c.list) == 0 {
		return nil
	}
	rank := map[string]int{}
	for _, e := range c.list {
		if _, ok := rank[e.File]; !ok {
			rank[e.File] = len(rank)
		}
	}
	sort.SliceStable(c.list, func(i, j int) bool {
		a, b := c.list[i], c.list[j]
		if rank[a.File] != rank[b.File] {
			return rank[a.File] < rank[b.File]
		}
		return a.Line < b.Line
	})
	return c.list
}
