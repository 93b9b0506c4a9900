package config

import (
	"fmt"
	"sort"
	"strings"
)

// Error is one problem in a project file.
type Error struct {
	File string
	// Line and Col are 1-based; 0 when unknown.
	Line, Col int
	// Path is the field path, such as "tracker.timeouts.step" or
	// "gates[1].paired.confidence"; "" for the whole file.
	Path string
	// Msg says what is wrong and what was expected.
	Msg string
}

// Error formats e as "file:line:col: path: message", leaving out unknown
// parts.
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
		b.WriteString(e.Path + ": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// ErrorList is every problem found in one file, sorted by position. It is
// the error type Parse and Load return for bad content.
type ErrorList []*Error

// Error returns one line per problem.
func (l ErrorList) Error() string {
	s := make([]string, len(l))
	for i, e := range l {
		s[i] = e.Error()
	}
	return strings.Join(s, "\n")
}

func (l ErrorList) sorted() ErrorList {
	sort.SliceStable(l, func(i, j int) bool {
		if l[i].Line != l[j].Line {
			return l[i].Line < l[j].Line
		}
		return l[i].Col < l[j].Col
	})
	return l
}
