package scenario

import (
	"cmp"
	"fmt"
	"slices"
	"strings"
)

// Error is one problem found in a scenario file, at a position.
type Error struct {
	// File is the file name as given to Load or Parse.
	File string
	// Line and Col are 1-based; Col is 0 when only the line is known (YAML
	// syntax errors) and both are 0 for problems of the whole file.
	Line, Col int
	// Path is the field path, such as "objects[1].prior.cov", or "" for
	// problems of the whole file.
	Path string
	// Msg says what is wrong and what was expected.
	Msg string
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

// ErrorList is every problem found in one scenario file, sorted by position.
// It is the error type Load and Parse return.
type ErrorList []*Error

// Error returns one line per error.
func (l ErrorList) Error() string {
	lines := make([]string, len(l))
	for i, e := range l {
		lines[i] = e.Error()
	}
	return strings.Join(lines, "\n")
}

// sort orders the list by line, then column, keeping the order of errors
// found at the same position, and drops exact duplicates.
func (l ErrorList) sort() ErrorList {
	slices.SortStableFunc(l, func(a, b *Error) int {
		return cmp.Or(cmp.Compare(a.Line, b.Line), cmp.Compare(a.Col, b.Col))
	})
	return slices.CompactFunc(l, func(a, b *Error) bool { return *a == *b })
}
