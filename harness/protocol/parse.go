package protocol

import (
	"encoding/json"
	"math"
	"strconv"
	"unicode/utf8"
)

// parser is a small hand-written JSON reader over one line. It reads
// exactly the shapes of the protocol without reflection, remembers byte
// offsets for error columns, and accepts the non-standard tokens NaN,
// Infinity and -Infinity where a number is expected so that they can be
// reported as non-finite values.
type parser struct {
	b []byte
	i int
	// bad is the first non-finite number met (0 when none) and badAt/badField
	// where it was.
	bad      float64
	badSet   bool
	badAt    int
	badField string
	err      *Error
}

func (p *parser) reset(b []byte) {
	*p = parser{b: b}
}

func (p *parser) ws() {
	for p.i < len(p.b) {
		switch p.b[p.i] {
		case ' ', '\t', '\r', '\n':
			p.i++
		default:
			return
		}
	}
}

func (p *parser) fail(kind Kind, at int, field, msg string) bool {
	if p.err == nil {
		p.err = &Error{Kind: kind, Col: at + 1, Field: field, Msg: msg}
	}
	return false
}

func (p *parser) syntax(msg string) bool { return p.fail(Syntax, p.i, "", msg) }

// peek returns the next non-space byte, or 0 at the end.
func (p *parser) peek() byte {
	p.ws()
	if p.i < len(p.b) {
		return p.b[p.i]
	}
	return 0
}

func (p *parser) expect(c byte) bool {
	if p.peek() != c {
		if p.i >= len(p.b) {
			return p.syntax("unexpected end of line, want '" + string(c) + "'")
		}
		return p.syntax("unexpected " + quoteByte(p.b[p.i]) + ", want '" + string(c) + "'")
	}
	p.i++
	return true
}

func quoteByte(c byte) string {
	if c >= 0x20 && c < 0x7f {
		return "'" + string(c) + "'"
	}
	return "byte 0x" + string(hexDigits[c>>4]) + string(hexDigits[c&0xf])
}

// more is called in a loop over the members of an object or array opened
// with '{' or '['; it consumes the separating comma or the closing bracket
// and reports whether another member follows.
func (p *parser) more(close byte, first *bool) bool {
	c := p.peek()
	if c == close {
		p.i++
		return false
	}
	if !*first {
		if c != ',' {
			if c == 0 {
				p.syntax("unexpected end of line, want ',' or '" + string(close) + "'")
			} else {
				p.syntax("unexpected " + quoteByte(c) + ", want ',' or '" + string(close) + "'")
			}
			return false
		}
		p.i++
		p.ws()
	}
	*first = false
	return p.err == nil
}

// rawString returns the bytes between the quotes of a string and whether it
// contained escapes. The string is checked for validity.
func (p *parser) rawString() (raw []byte, escaped, ok bool) {
	if c := p.peek(); c != '"' {
		if c == 0 {
			return nil, false, p.syntax("unexpected end of line, want a string")
		}
		return nil, false, p.syntax("unexpected " + quoteByte(c) + ", want a string")
	}
	p.i++
	start := p.i
	for p.i < len(p.b) {
		c := p.b[p.i]
		switch {
		case c == '"':
			raw = p.b[start:p.i]
			p.i++
			// encoding/json would turn invalid UTF-8 and unpaired
			// surrogate escapes into U+FFFD, so that distinct strings
			// (track ids) could become equal; JSON text exchanged between
			// programs must be UTF-8 (RFC 8259, section 8.1).
			if at := invalidUTF8(raw); at >= 0 {
				p.fail(Syntax, start+at, "", "invalid UTF-8 in string")
				return nil, false, false
			}
			if escaped {
				if at := loneSurrogate(raw); at >= 0 {
					p.fail(Syntax, start+at, "", "unpaired UTF-16 surrogate escape in string")
					return nil, false, false
				}
				// Leave the other unusual cases to encoding/json's checks.
				var s string
				if err := json.Unmarshal(p.b[start-1:p.i], &s); err != nil {
					p.fail(Syntax, start-1, "", "invalid string")
					return nil, false, false
				}
			}
			return raw, escaped, true
		case c == '\\':
			escaped = true
			p.i += 2
		case c < 0x20:
			return nil, false, p.syntax("control character in string")
		default:
			p.i++
		}
	}
	return nil, false, p.syntax("unterminated string")
}

// invalidUTF8 returns the offset of the first byte of b that does not
// start a valid UTF-8 sequence, or −1.
func invalidUTF8(b []byte) int {
	if utf8.Valid(b) {
		return -1
	}
	for i := 0; i < len(b); {
		r, n := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && n == 1 {
			return i
		}
		i += n
	}
	return -1
}

// loneSurrogate returns the offset of the first \u escape in the string
// body b that is a UTF-16 surrogate without its partner (a high surrogate
// D800–DBFF must be followed at once by an escaped low surrogate
// DC00–DFFF; RFC 8259, section 7), or −1.
func loneSurrogate(b []byte) int {
	hex := func(i int) int {
		if i+6 > len(b) || b[i] != '\\' || b[i+1] != 'u' {
			return -1
		}
		v, err := strconv.ParseUint(string(b[i+2:i+6]), 16, 16)
		if err != nil {
			return -1
		}
		return int(v)
	}
	for i := 0; i < len(b); i++ {
		if b[i] != '\\' {
			continue
		}
		v := hex(i)
		switch {
		case v >= 0xD800 && v <= 0xDBFF:
			if w := hex(i + 6); w < 0xDC00 || w > 0xDFFF {
				return i
			}
			i += 11
		case v >= 0xDC00 && v <= 0xDFFF:
			return i
		default:
			i++ // skip the escaped character
		}
	}
	return -1
}

// named gives the pending error, if it names no field yet, the field name.
func (p *parser) named(field string) {
	if p.err != nil && p.err.Field == "" {
		p.err.Field = field
	}
}

// str reads a string value.
func (p *parser) str() (string, bool) {
	start := p.i
	raw, esc, ok := p.rawString()
	if !ok {
		return "", false
	}
	if !esc {
		return string(raw), true
	}
	var s string
	_ = json.Unmarshal(p.b[start:p.i], &s) // validated by rawString
	return s, true
}

// key reads an object key and the colon after it. Keys are compared as raw
// bytes; a key with escapes is decoded first.
func (p *parser) key() ([]byte, bool) {
	start := p.i
	raw, esc, ok := p.rawString()
	if !ok {
		return nil, false
	}
	if esc {
		var s string
		_ = json.Unmarshal(p.b[start:p.i], &s)
		raw = []byte(s)
	}
	return raw, p.expect(':')
}

// numberToken scans a number literal (JSON grammar, or NaN / Infinity /
// -Infinity) and returns its bytes; nonStd is set for the three tokens.
func (p *parser) numberToken() (tok []byte, nonStd bool, ok bool) {
	p.ws()
	start := p.i
	b := p.b
	for _, t := range [...]string{"NaN", "Infinity", "-Infinity"} {
		if len(b)-start >= len(t) && string(b[start:start+len(t)]) == t {
			p.i += len(t)
			return b[start:p.i], true, true
		}
	}
	i := start
	if i < len(b) && b[i] == '-' {
		i++
	}
	switch {
	case i < len(b) && b[i] == '0':
		i++
	case i < len(b) && b[i] >= '1' && b[i] <= '9':
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
	default:
		return nil, false, p.syntax("want a number")
	}
	if i < len(b) && b[i] == '.' {
		i++
		d := i
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
		if i == d {
			p.i = i
			return nil, false, p.syntax("want a digit after '.'")
		}
	}
	if i < len(b) && (b[i] == 'e' || b[i] == 'E') {
		i++
		if i < len(b) && (b[i] == '+' || b[i] == '-') {
			i++
		}
		d := i
		for i < len(b) && b[i] >= '0' && b[i] <= '9' {
			i++
		}
		if i == d {
			p.i = i
			return nil, false, p.syntax("want a digit in the exponent")
		}
	}
	p.i = i
	return b[start:i], false, true
}

// float reads a number. A non-finite value is remembered (the first one
// wins) under field, computed only then by the caller-supplied function,
// and returned as 0 so that parsing can go on and a syntax error later in
// the line still takes precedence.
func (p *parser) float(field func() string) (float64, bool) {
	p.ws()
	at := p.i
	tok, nonStd, ok := p.numberToken()
	if !ok {
		if p.err != nil && p.err.Field == "" && field != nil {
			p.err.Field = field()
		}
		return 0, false
	}
	var v float64
	if nonStd {
		switch tok[0] {
		case 'N':
			v = math.NaN()
		case 'I':
			v = math.Inf(1)
		default:
			v = math.Inf(-1)
		}
	} else {
		v, _ = strconv.ParseFloat(string(tok), 64) // ±Inf with ErrRange on overflow
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		if !p.badSet {
			p.badSet, p.bad, p.badAt = true, v, at
			if field != nil {
				p.badField = field()
			}
		}
		return 0, true
	}
	return v, true
}

// integer reads an integer literal (no fraction or exponent).
func (p *parser) integer(field func() string) (int64, []byte, bool) {
	p.ws()
	at := p.i
	tok, nonStd, ok := p.numberToken()
	if !ok {
		return 0, nil, false
	}
	if nonStd {
		return 0, nil, p.fail(Shape, at, field(), "want an integer, got "+string(tok))
	}
	n, err := strconv.ParseInt(string(tok), 10, 64)
	if err != nil {
		return 0, nil, p.fail(Shape, at, field(), "want an integer, got "+excerpt(tok))
	}
	return n, tok, true
}

// skip reads and discards any value, checking its syntax.
func (p *parser) skip(depth int) bool {
	if depth > 64 {
		return p.syntax("nesting too deep")
	}
	switch c := p.peek(); {
	case c == '{':
		p.i++
		first := true
		for p.more('}', &first) {
			if _, ok := p.key(); !ok {
				return false
			}
			if !p.skip(depth + 1) {
				return false
			}
		}
	case c == '[':
		p.i++
		first := true
		for p.more(']', &first) {
			if !p.skip(depth + 1) {
				return false
			}
		}
	case c == '"':
		_, _, ok := p.rawString()
		return ok
	case c == 't':
		return p.literal("true")
	case c == 'f':
		return p.literal("false")
	case c == 'n':
		return p.literal("null")
	default:
		// Numbers, including the non-standard tokens: an extra field's
		// value is kept on the tape and otherwise ignored.
		_, _, ok := p.numberToken()
		return ok
	}
	return p.err == nil
}

func (p *parser) literal(word string) bool {
	if len(p.b)-p.i >= len(word) && string(p.b[p.i:p.i+len(word)]) == word {
		p.i += len(word)
		return true
	}
	return p.syntax("invalid literal")
}

// isNull consumes a null literal if one comes next.
func (p *parser) isNull() bool {
	if p.peek() == 'n' && len(p.b)-p.i >= 4 && string(p.b[p.i:p.i+4]) == "null" {
		p.i += 4
		return true
	}
	return false
}

func (p *parser) boolean(field string) (bool, bool) {
	switch p.peek() {
	case 't':
		return true, p.literal("true")
	case 'f':
		return false, p.literal("false")
	}
	return false, p.fail(Shape, p.i, field, "want true or false")
}

// floats reads an array of numbers, appending to dst.
func (p *parser) floats(dst []float64, field func(i int) string) ([]float64, bool) {
	if p.peek() != '[' {
		return dst, p.fail(Shape, p.i, field(-1), "want an array of numbers")
	}
	p.i++
	first := true
	for k := 0; p.more(']', &first); k++ {
		if c := p.peek(); c == '[' || c == '{' || c == '"' {
			return dst, p.fail(Shape, p.i, field(k), "want a number")
		}
		v, ok := p.float(func() string { return field(k) })
		if !ok {
			return dst, false
		}
		dst = append(dst, v)
	}
	return dst, p.err == nil
}

// end checks that nothing but spaces follows the value.
func (p *parser) end() bool {
	if p.peek() != 0 {
		return p.syntax("unexpected data after the message")
	}
	return true
}

// finish turns the parse state into the error to report: a syntax or shape
// error first, then a non-finite value.
func (p *parser) finish() *Error {
	if p.err != nil {
		return p.err
	}
	if p.badSet {
		return &Error{Kind: NonFinite, Col: p.badAt + 1, Field: p.badField,
			Msg: "non-finite number " + strconv.FormatFloat(p.bad, 'g', -1, 64)}
	}
	return nil
}

func excerpt(b []byte) string {
	const max = 40
	if len(b) > max {
		return string(b[:max]) + "…"
	}
	return string(b)
}
