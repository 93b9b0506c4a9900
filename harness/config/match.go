package config

import (
	"fmt"
	"path"
)

// The scenario name rule, restated from the scenario reader: lower-case
// letters and digits in words joined by single '-' (the regular expression
// ^[a-z0-9]+(-[a-z0-9]+)*$), at most maxNameLen bytes. TestNameRuleAgrees
// checks the two against each other.
const (
	maxNameLen = 64
	nameRule   = "lower-case letters and digits in words joined by single '-', at most 64 characters"
)

// nameAlphabet is every byte a scenario name can hold.
const nameAlphabet = "abcdefghijklmnopqrstuvwxyz0123456789-"

// patternUnit is one piece of a path.Match pattern: a '*', or a single-byte
// matcher given as the set of name bytes it accepts.
type patternUnit struct {
	star bool
	set  [len(nameAlphabet)]bool
}

// units splits a well-formed path.Match pattern into its pieces. Which
// name bytes a single-byte piece accepts is asked of path.Match itself, so
// character classes, ranges, negation and escapes mean exactly what they
// mean to For.
func units(pattern string) []patternUnit {
	var out []patternUnit
	for i := 0; i < len(pattern); {
		j := i + 1
		switch pattern[i] {
		case '*':
			if len(out) == 0 || !out[len(out)-1].star {
				out = append(out, patternUnit{star: true})
			}
			i = j
			continue
		case '\\':
			j = min(i+2, len(pattern))
		case '[':
			if j < len(pattern) && pattern[j] == '^' {
				j++
			}
			for j < len(pattern) && pattern[j] != ']' {
				if pattern[j] == '\\' {
					j++
				}
				j++
			}
			j = min(j+1, len(pattern))
		}
		var u patternUnit
		for k := range nameAlphabet {
			u.set[k], _ = path.Match(pattern[i:j], nameAlphabet[k:k+1])
		}
		out = append(out, u)
		i = j
	}
	return out
}

// shortestName returns the length of the shortest valid scenario name the
// pattern matches, or −1 when it matches none of maxNameLen bytes or
// fewer. The pattern must be well formed.
//
// It walks the product of the pattern's automaton (one state per piece
// consumed) with the name rule's three-state automaton (at the start,
// after a letter or digit, after a '-'; a name ends after a letter or
// digit) breadth first, one byte per layer: the standard product
// construction for the intersection of two regular languages (M. O. Rabin
// and D. Scott, "Finite automata and their decision problems", IBM J. Res.
// Dev. 3(2), 1959).
func shortestName(pattern string) int {
	us := units(pattern)
	singles := 0
	for _, u := range us {
		if !u.star {
			singles++
		}
	}
	if singles > maxNameLen {
		return -1
	}
	const (
		atStart = iota
		afterWord
		afterDash
		nStates
	)
	type state struct{ piece, name int }
	cur := map[state]bool{{0, atStart}: true}
	for length := 0; length <= maxNameLen && len(cur) > 0; length++ {
		// A '*' may match nothing: close over skipping stars.
		var stack []state
		for s := range cur {
			stack = append(stack, s)
		}
		for len(stack) > 0 {
			s := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			if s.piece < len(us) && us[s.piece].star {
				t := state{s.piece + 1, s.name}
				if !cur[t] {
					cur[t] = true
					stack = append(stack, t)
				}
			}
		}
		if cur[state{len(us), afterWord}] {
			return length
		}
		next := map[state]bool{}
		for s := range cur {
			if s.piece == len(us) {
				continue
			}
			u := us[s.piece]
			for k := range nameAlphabet {
				if !u.star && !u.set[k] {
					continue
				}
				name := afterWord
				if nameAlphabet[k] == '-' {
					if s.name != afterWord {
						continue
					}
					name = afterDash
				}
				piece := s.piece + 1
				if u.star {
					piece = s.piece
				}
				next[state{piece, name}] = true
			}
		}
		cur = next
	}
	return -1
}

// UnusedOverrides returns, for every per-scenario override whose pattern
// matches none of names (the scenarios loaded for a run), an error at the
// override's match field saying so, in file order; nil when every
// override applies to some scenario. The errors are warnings for the
// runner to show: an override that matches nothing is most likely a
// misspelt pattern.
func (c Config) UnusedOverrides(names []string) []*Error {
	var out []*Error
	for i, o := range c.PerScenario {
		used := false
		for _, n := range names {
			if ok, _ := path.Match(o.Match, n); ok {
				used = true
				break
			}
		}
		if used {
			continue
		}
		out = append(out, &Error{File: c.File, Line: o.Line, Col: o.Col,
			Path: join(index("per_scenario", i), "match"),
			Msg:  fmt.Sprintf("pattern %q matches none of the %d scenarios loaded; the override has no effect", o.Match, len(names))})
	}
	return out
}
