package runner

import (
	"fmt"
	"strings"
)

// SplitCommand splits a command line into an argument vector the way a
// POSIX shell splits words, without running a shell and without any
// expansion:
//
//   - unquoted blanks (space, tab, newline) separate words;
//   - inside single quotes every character is literal, up to the next
//     single quote;
//   - inside double quotes a backslash escapes only ", \, $ and `
//     (elsewhere it is kept), and everything else is literal;
//   - outside quotes a backslash makes the next character literal, and a
//     backslash before a newline joins the lines;
//   - quotes glue to their neighbours: a'b c'"d" is the one word "ab cd",
//     and ” is an empty word.
//
// Variables ($HOME), globs (*.yaml), redirections and pipes are not
// interpreted: they are ordinary characters. An unterminated quote or a
// trailing lone backslash is an error naming its column; an empty line
// gives no words (an error for callers that need a command).
//
// Reference: IEEE Std 1003.1-2017 (POSIX), Shell Command Language,
// §2.2 Quoting and §2.3 Token Recognition.
func SplitCommand(line string) ([]string, error) {
	var words []string
	var cur strings.Builder
	inWord := false
	rs := []rune(line)
	for i := 0; i < len(rs); i++ {
		c := rs[i]
		switch {
		case c == ' ' || c == '\t' || c == '\n':
			if inWord {
				words = append(words, cur.String())
				cur.Reset()
				inWord = false
			}
		case c == '\\':
			if i+1 >= len(rs) {
				return nil, fmt.Errorf("column %d: a backslash ends the command; expected a character after it", i+1)
			}
			i++
			if rs[i] == '\n' {
				continue
			}
			cur.WriteRune(rs[i])
			inWord = true
		case c == '\'':
			end := -1
			for k := i + 1; k < len(rs); k++ {
				if rs[k] == '\'' {
					end = k
					break
				}
			}
			if end < 0 {
				return nil, fmt.Errorf("column %d: unterminated single quote; expected a closing '", i+1)
			}
			cur.WriteString(string(rs[i+1 : end]))
			i = end
			inWord = true
		case c == '"':
			k := i + 1
			closed := false
			for ; k < len(rs); k++ {
				if rs[k] == '"' {
					closed = true
					break
				}
				if rs[k] == '\\' && k+1 < len(rs) && strings.ContainsRune("\"\\$`", rs[k+1]) {
					k++
					cur.WriteRune(rs[k])
					continue
				}
				if rs[k] == '\\' && k+1 < len(rs) && rs[k+1] == '\n' {
					k++
					continue
				}
				cur.WriteRune(rs[k])
			}
			if !closed {
				return nil, fmt.Errorf("column %d: unterminated double quote; expected a closing \"", i+1)
			}
			i = k
			inWord = true
		default:
			cur.WriteRune(c)
			inWord = true
		}
	}
	if inWord {
		words = append(words, cur.String())
	}
	return words, nil
}
