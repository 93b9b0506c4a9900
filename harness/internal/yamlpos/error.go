package yamlpos

import (
	"cmp"
	"fmt"
	"slices"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Error is one problem in a YAML file, at a position.
type Error struct {
	// File is the file name as given to the reader.
	File string
	// Line and Col are 1-based; Col is 0 when only the line is known
	// (YAML syntax errors) and both are 0 for problems of the whole file.
	Line, Col int
	// Path is the field path, such as "objects[1].prior.cov" or
	// "tracker.timeouts.step", or "" for problems of the whole file.
	Path string
	// Msg says what is wrong and what was expected.
	Msg string
}

// At returns the error at node n (at no position when n is nil) with the
// message fmt.Sprintf(format, args...).
func At(file string, n *yaml.Node, path, format string, args ...any) *Error {
	e := &Error{File: file, Path: path, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line, e.Col = n.Line, n.Column
	}
	return e
}

// Error formats e as "file:line:col: path: message", leaving out the parts
// that are unknown.
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
		if e.Col > 0 {
			fmt.Fprintf(&b, ":%d", e.Col)
		}
	}
	b.WriteString(": ")
	if e.Path != "" {
		b.WriteString(e.Path)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// ErrorList is every problem found in one file.
type ErrorList []*Error

// Error returns one line per error.
func (l ErrorList) Error() string {
	lines := make([]string, len(l))
	for i, e := range l {
		lines[i] = e.Error()
	}
	return strings.Join(lines, "\n")
}

// Sort orders l in place by line, then column, keeping the order of errors
// found at the same position, and returns it.
func (l ErrorList) Sort() ErrorList {
	slices.SortStableFunc(l, func(a, b *Error) int {
		return cmp.Or(cmp.Compare(a.Line, b.Line), cmp.Compare(a.Col, b.Col))
	})
	return l
}

// Compact drops the errors equal in every field to the one before them and
// returns the shortened list; after Sort it drops every exact duplicate.
func (l ErrorList) Compact() ErrorList {
	return slices.CompactFunc(l, func(a, b *Error) bool { return *a == *b })
}

// Collector gathers the errors of one file while its node tree is checked.
type Collector struct {
	// File names the file in every error.
	File string
	// Errs holds the errors in the order they were found.
	Errs ErrorList
}

// ErrAt records the error At(c.File, n, path, format, args...).
func (c *Collector) ErrAt(n *yaml.Node, path, format string, args ...any) {
	c.Errs = append(c.Errs, At(c.File, n, path, format, args...))
}
