package result

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"reflect"
	"strconv"
	"strings"

	"trackgate/harness/internal/atomicfile"
)

// The strings that stand for non-finite values in the JSON file.
const (
	jsonNaN    = "NaN"
	jsonPosInf = "Infinity"
	jsonNegInf = "-Infinity"
)

// Marshal returns the JSON encoding of s described in the package
// documentation: deterministic, indented, non-finite values as strings.
func Marshal(s *Suite) ([]byte, error) {
	if s == nil {
		return nil, errors.New("result: Marshal of a nil Suite")
	}
	var b bytes.Buffer
	if err := encodeValue(&b, reflect.ValueOf(s).Elem(), ""); err != nil {
		return nil, err
	}
	b.WriteByte('\n')
	return b.Bytes(), nil
}

// Unmarshal decodes a result file's bytes; name is used in error messages.
func Unmarshal(name string, data []byte) (*Suite, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	var tree any
	if err := dec.Decode(&tree); err != nil {
		return nil, syntaxError(name, data, err)
	}
	if _, err := dec.Token(); err != io.EOF {
		line, col := position(data, dec.InputOffset())
		return nil, fmt.Errorf("%s:%d:%d: unexpected data after the result object", name, line, col)
	}
	obj, ok := tree.(map[string]any)
	if !ok {
		return nil, fmt.Errorf("%s: expected a JSON object at the top, got %s", name, kindOf(tree))
	}
	rawVersion, ok := obj["version"]
	if !ok {
		return nil, fmt.Errorf("%s: version: missing; is this a trackgate result file?", name)
	}
	num, ok := rawVersion.(json.Number)
	v, err := num.Int64()
	if !ok || err != nil {
		return nil, fmt.Errorf("%s: version: expected an integer, got %s", name, kindOf(rawVersion))
	}
	if v != Version {
		return nil, fmt.Errorf("%s: version: written by result version %d; this trackgate reads version %d", name, v, Version)
	}
	s := new(Suite)
	err = decodeValue(reflect.ValueOf(s).Elem(), tree, "")
	if err == nil {
		err = checkStatuses(obj)
	}
	if err == nil {
		err = validate(s)
	}
	if err != nil {
		var fe *fieldError
		if errors.As(err, &fe) {
			if line, col, ok := locate(data, fe.path); ok {
				return nil, fmt.Errorf("%s:%d:%d: %w", name, line, col, err)
			}
		}
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	return s, nil
}

// Limits on what a result file may hold, checked as it is read (validate).
const (
	// MaxRunsPlanned bounds a scenario's runs_planned: the most runs
	// trackgate checks of one scenario (runner.MaxRuns).
	MaxRunsPlanned = 100000
	// MaxStateDim bounds a scenario's state_dim and meas_dim.
	MaxStateDim = 64
)

// validate checks what the types cannot say about a decoded suite, so that
// what reads it (Merge, the runner's Judge, the reports) may rely on it:
// a shard with 0 ≤ index < total; per scenario, dimensions
// between 1 and MaxStateDim when it has runs (0 is left for a scenario
// that did not load), position components inside the state, runs_planned
// between 0 and MaxRunsPlanned, run indices ≥ 0 and below runs_planned
// when it is known; per-step NEES bounds (nees_low_by_step,
// nees_high_by_step) either both absent or both as long as nees, and
// nees_steps absent or as long as nees, ascending and ≥ 0; the NIS
// bounds and steps (nis_low_by_step, nis_high_by_step, nis_steps) all
// absent or all as long as nis, the steps ascending and ≥ 0;
// well-formed gate rules. The statuses are checked before, on the JSON
// tree (checkStatuses). Errors are fieldErrors, so that Unmarshal names
// the line and column.
func validate(s *Suite) error {
	if sh := s.Shard; sh != nil {
		if sh.Total < 1 {
			return fieldErr("shard.total", "expected at least 1, got %d", sh.Total)
		}
		if sh.Index < 0 || sh.Index >= sh.Total {
			return fieldErr("shard.index", "expected 0 to %d (total−1), got %d", sh.Total-1, sh.Index)
		}
	}
	for i, sc := range s.Scenarios {
		p := fmt.Sprintf("scenarios[%d]", i)
		lo := 0
		if len(sc.Runs) > 0 {
			lo = 1
		}
		if sc.StateDim < lo || sc.StateDim > MaxStateDim {
			return fieldErr(p+".state_dim", "expected %d to %d, got %d", lo, MaxStateDim, sc.StateDim)
		}
		if sc.MeasDim < lo || sc.MeasDim > MaxStateDim {
			return fieldErr(p+".meas_dim", "expected %d to %d, got %d", lo, MaxStateDim, sc.MeasDim)
		}
		for k, c := range sc.Position {
			if c < 0 || c >= sc.StateDim {
				return fieldErr(fmt.Sprintf("%s.position[%d]", p, k), "expected a state component 0 to %d, got %d", sc.StateDim-1, c)
			}
		}
		if sc.RunsPlanned < 0 || sc.RunsPlanned > MaxRunsPlanned {
			return fieldErr(p+".runs_planned", "expected 0 (unknown) to %d, got %d", MaxRunsPlanned, sc.RunsPlanned)
		}
		if m := sc.Metrics; m != nil && (len(m.NEESLowByStep) > 0 || len(m.NEESHighByStep) > 0) {
			if len(m.NEESLowByStep) != len(m.NEES) {
				return fieldErr(p+".metrics.nees_low_by_step", "expected one bound per step of nees (%d), got %d", len(m.NEES), len(m.NEESLowByStep))
			}
			if len(m.NEESHighByStep) != len(m.NEES) {
				return fieldErr(p+".metrics.nees_high_by_step", "expected one bound per step of nees (%d), got %d", len(m.NEES), len(m.NEESHighByStep))
			}
		}
		if m := sc.Metrics; m != nil && len(m.NEESSteps) > 0 {
			if len(m.NEESSteps) != len(m.NEES) {
				return fieldErr(p+".metrics.nees_steps", "expected one step per entry of nees (%d), got %d", len(m.NEES), len(m.NEESSteps))
			}
			for k, st := range m.NEESSteps {
				if st < 0 || (k > 0 && st <= m.NEESSteps[k-1]) {
					return fieldErr(fmt.Sprintf("%s.metrics.nees_steps[%d]", p, k), "expected a step ≥ 0 after the previous one, got %d", st)
				}
			}
		}
		if m := sc.Metrics; m != nil && (len(m.NISLowByStep) > 0 || len(m.NISHighByStep) > 0 || len(m.NISSteps) > 0) {
			for _, f := range []struct {
				name string
				n    int
			}{{"nis_low_by_step", len(m.NISLowByStep)}, {"nis_high_by_step", len(m.NISHighByStep)}, {"nis_steps", len(m.NISSteps)}} {
				if f.n != len(m.NIS) {
					return fieldErr(p+".metrics."+f.name, "expected one entry per step of nis (%d), got %d", len(m.NIS), f.n)
				}
			}
			for k, st := range m.NISSteps {
				if st < 0 || (k > 0 && st <= m.NISSteps[k-1]) {
					return fieldErr(fmt.Sprintf("%s.metrics.nis_steps[%d]", p, k), "expected a step ≥ 0 after the previous one, got %d", st)
				}
			}
		}
		for k, r := range sc.Runs {
			rp := fmt.Sprintf("%s.runs[%d]", p, k)
			if r.Index < 0 || (sc.RunsPlanned > 0 && r.Index >= sc.RunsPlanned) || r.Index >= MaxRunsPlanned {
				last := MaxRunsPlanned - 1
				if sc.RunsPlanned > 0 {
					last = sc.RunsPlanned - 1
				}
				return fieldErr(rp+".index", "expected a run index from 0 to %d, got %d", last, r.Index)
			}
		}
	}
	if s.Rules != nil {
		for i, g := range s.Rules.Gates {
			p := fmt.Sprintf("rules.gates[%d]", i)
			switch {
			case g.Metric == "":
				return fieldErr(p+".metric", "expected a metric name, got an empty string")
			case g.Worse != "higher" && g.Worse != "lower":
				return fieldErr(p+".worse", `expected "higher" or "lower", got %q`, g.Worse)
			case g.Limit == nil && g.Paired == nil:
				return fieldErr(p, `expected "limit", "paired" or both`)
			case g.Limit != nil && (math.IsNaN(*g.Limit) || math.IsInf(*g.Limit, 0)):
				return fieldErr(p+".limit", "expected a finite limit, got %g", *g.Limit)
			}
			if pr := g.Paired; pr != nil {
				if !(pr.Confidence > 0 && pr.Confidence < 1) {
					return fieldErr(p+".paired.confidence", "expected a confidence level in (0, 1), got %g", pr.Confidence)
				}
				if !(pr.MinEffect >= 0) || math.IsInf(pr.MinEffect, 0) {
					return fieldErr(p+".paired.min_effect", "expected a finite effect size ≥ 0, got %g", pr.MinEffect)
				}
			}
		}
	}
	return nil
}

// knownStatuses are the statuses a result file may hold, best first.
var knownStatuses = []Status{Pass, Tie, Skip, Fail, Error, Faulted}

// checkStatus returns a fieldError for a status outside knownStatuses: an
// unknown status would otherwise rank as Error and be carried, misspelt,
// into the merged suite's status and the exit code.
func checkStatus(path string, st Status) error {
	for _, k := range knownStatuses {
		if st == k {
			return nil
		}
	}
	return fieldErr(path, `expected one of "pass", "tie", "skip", "fail", "error", "fault", got %q`, string(st))
}

// checkStatuses checks, on the decoded JSON tree (whose member types
// decodeValue has already checked), the status of the suite and of every
// scenario, run, check and scenario gate, in file order: each must be one
// of knownStatuses. An absent status, which reads as the empty string and
// is written back as "", is left to the schema (which requires it): the
// reader still takes minimal files without one, and what it writes it
// must read again.
func checkStatuses(tree map[string]any) error {
	check := func(path string, obj map[string]any) error {
		st, _ := obj["status"].(string)
		if st == "" {
			return nil
		}
		return checkStatus(join(path, "status"), Status(st))
	}
	objects := func(obj map[string]any, key string) []map[string]any {
		arr, _ := obj[key].([]any)
		out := make([]map[string]any, len(arr))
		for i, x := range arr {
			out[i], _ = x.(map[string]any)
		}
		return out
	}
	if err := check("", tree); err != nil {
		return err
	}
	for i, sc := range objects(tree, "scenarios") {
		p := fmt.Sprintf("scenarios[%d]", i)
		if err := check(p, sc); err != nil {
			return err
		}
		for k, r := range objects(sc, "runs") {
			rp := fmt.Sprintf("%s.runs[%d]", p, k)
			if err := check(rp, r); err != nil {
				return err
			}
			for c, ch := range objects(r, "checks") {
				if err := check(fmt.Sprintf("%s.checks[%d]", rp, c), ch); err != nil {
					return err
				}
			}
		}
		for g, gt := range objects(sc, "gates") {
			if err := check(fmt.Sprintf("%s.gates[%d]", p, g), gt); err != nil {
				return err
			}
		}
	}
	return nil
}

// fieldError is a member of the wrong type or value, by its path.
type fieldError struct {
	path, msg string
}

func (e *fieldError) Error() string { return e.path + ": " + e.msg }

func fieldErr(path, format string, args ...any) error {
	return &fieldError{path: path, msg: fmt.Sprintf(format, args...)}
}

// locate returns the line and column where the value at path (as decodeValue
// names it: "scenarios[1].runs[0].seed") starts in data.
func locate(data []byte, target string) (line, col int, ok bool) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	var found int64 = -1
	var walk func(path string) bool
	walk = func(path string) bool {
		if path == target {
			found = dec.InputOffset()
			return true
		}
		tok, err := dec.Token()
		if err != nil {
			return true // give up; found stays -1
		}
		d, isDelim := tok.(json.Delim)
		if !isDelim {
			return false
		}
		switch d {
		case '{':
			for dec.More() {
				key, err := dec.Token()
				if err != nil {
					return true
				}
				k, _ := key.(string)
				if walk(join(path, k)) {
					return true
				}
			}
		case '[':
			for i := 0; dec.More(); i++ {
				if walk(fmt.Sprintf("%s[%d]", path, i)) {
					return true
				}
			}
		}
		if _, err := dec.Token(); err != nil { // the closing delimiter
			return true
		}
		return false
	}
	walk("")
	if found < 0 {
		return 0, 0, false
	}
	// InputOffset stops after the previous token: skip the separator.
	for found < int64(len(data)) && strings.IndexByte(" \t\r\n:,", data[found]) >= 0 {
		found++
	}
	line, col = position(data, found)
	return line, col, true
}

// Write writes s to path atomically: the bytes go to a temporary file in the
// same directory, which is synced and then renamed over path, so a reader
// sees either the old file or the complete new one.
func Write(path string, s *Suite) error {
	data, err := Marshal(s)
	if err != nil {
		return err
	}
	return WriteFile(path, data)
}

// WriteFile writes data to path atomically (temporary file in the same
// directory, fsync, rename, fsync of the directory; see
// harness/internal/atomicfile). The file gets mode 0644.
func WriteFile(path string, data []byte) error {
	if err := atomicfile.WriteBytes(path, data); err != nil {
		return fmt.Errorf("result: %w", err)
	}
	return nil
}

// Read reads a result file written by Write.
func Read(path string) (*Suite, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	return Unmarshal(path, data)
}

// syntaxError turns a json decoding error into one with a line and column.
func syntaxError(name string, data []byte, err error) error {
	var se *json.SyntaxError
	if errors.As(err, &se) {
		// Offset counts the byte that revealed the error; point at it.
		off := se.Offset
		if off > 0 {
			off--
		}
		line, col := position(data, off)
		return fmt.Errorf("%s:%d:%d: invalid JSON: %v", name, line, col, se)
	}
	if errors.Is(err, io.EOF) {
		return fmt.Errorf("%s: empty file, expected a result object", name)
	}
	if errors.Is(err, io.ErrUnexpectedEOF) {
		line, col := position(data, int64(len(data)))
		return fmt.Errorf("%s:%d:%d: invalid JSON: file ends inside a value (truncated?)", name, line, col)
	}
	return fmt.Errorf("%s: invalid JSON: %v", name, err)
}

// position returns the 1-based line and column of byte offset off.
func position(data []byte, off int64) (line, col int) {
	if off > int64(len(data)) {
		off = int64(len(data))
	}
	before := data[:off]
	line = bytes.Count(before, []byte("\n")) + 1
	col = int(off) - (bytes.LastIndexByte(before, '\n') + 1) + 1
	return line, col
}

// field is one encoded struct member.
type field struct {
	index     int
	name      string
	omitEmpty bool
}

func fieldsOf(t reflect.Type) []field {
	var fs []field
	for i := 0; i < t.NumField(); i++ {
		sf := t.Field(i)
		if !sf.IsExported() {
			continue
		}
		tag := sf.Tag.Get("json")
		if tag == "-" {
			continue
		}
		name, opts, _ := strings.Cut(tag, ",")
		if name == "" {
			name = sf.Name
		}
		fs = append(fs, field{index: i, name: name, omitEmpty: strings.Contains(","+opts+",", ",omitempty,")})
	}
	return fs
}

func isEmpty(v reflect.Value) bool {
	switch v.Kind() {
	case reflect.Slice, reflect.String, reflect.Map:
		return v.Len() == 0
	case reflect.Pointer, reflect.Interface:
		return v.IsNil()
	case reflect.Bool:
		return !v.Bool()
	case reflect.Int, reflect.Int64, reflect.Int32:
		return v.Int() == 0
	case reflect.Uint, reflect.Uint64, reflect.Uint32:
		return v.Uint() == 0
	case reflect.Float64, reflect.Float32:
		return v.Float() == 0
	}
	return false
}

// appendFloat writes f as encoding/json would for finite values and as one
// of the three strings otherwise.
func appendFloat(b *bytes.Buffer, f float64) {
	switch {
	case math.IsNaN(f):
		b.WriteString(`"` + jsonNaN + `"`)
		return
	case math.IsInf(f, 1):
		b.WriteString(`"` + jsonPosInf + `"`)
		return
	case math.IsInf(f, -1):
		b.WriteString(`"` + jsonNegInf + `"`)
		return
	}
	format := byte('f')
	if a := math.Abs(f); a != 0 && (a < 1e-6 || a >= 1e21) {
		format = 'e'
	}
	buf := strconv.AppendFloat(nil, f, format, -1, 64)
	if format == 'e' {
		// Clean up e-09 to e-9, as encoding/json does.
		if n := len(buf); n >= 4 && buf[n-4] == 'e' && buf[n-3] == '-' && buf[n-2] == '0' {
			buf[n-2] = buf[n-1]
			buf = buf[:n-1]
		}
	}
	b.Write(buf)
}

func appendString(b *bytes.Buffer, s string) {
	enc := json.NewEncoder(b)
	enc.SetEscapeHTML(false)
	enc.Encode(s) // cannot fail for a string
	b.Truncate(b.Len() - 1)
}

func encodeValue(b *bytes.Buffer, v reflect.Value, indent string) error {
	switch v.Kind() {
	case reflect.Pointer:
		if v.IsNil() {
			b.WriteString("null")
			return nil
		}
		return encodeValue(b, v.Elem(), indent)
	case reflect.Struct:
		fs := fieldsOf(v.Type())
		// Structs of scalars (points, diffs, shards) stay on one line.
		flat := isFlat(v.Type())
		inner := indent + "  "
		first := true
		b.WriteByte('{')
		for _, f := range fs {
			fv := v.Field(f.index)
			if f.omitEmpty && isEmpty(fv) {
				continue
			}
			if !first {
				b.WriteByte(',')
				if flat {
					b.WriteByte(' ')
				}
			}
			first = false
			if !flat {
				b.WriteString("\n" + inner)
			}
			appendString(b, f.name)
			b.WriteString(": ")
			if err := encodeValue(b, fv, inner); err != nil {
				return err
			}
		}
		if !first && !flat {
			b.WriteString("\n" + indent)
		}
		b.WriteByte('}')
	case reflect.Slice, reflect.Array:
		if v.Kind() == reflect.Slice && v.IsNil() {
			b.WriteString("null")
			return nil
		}
		if v.Len() == 0 {
			b.WriteString("[]")
			return nil
		}
		// Arrays of scalars stay on one line: they are short vectors.
		if k := v.Type().Elem().Kind(); k != reflect.Struct && k != reflect.Pointer && k != reflect.Slice {
			b.WriteByte('[')
			for i := 0; i < v.Len(); i++ {
				if i > 0 {
					b.WriteString(", ")
				}
				if err := encodeValue(b, v.Index(i), indent); err != nil {
					return err
				}
			}
			b.WriteByte(']')
			return nil
		}
		inner := indent + "  "
		b.WriteByte('[')
		for i := 0; i < v.Len(); i++ {
			if i > 0 {
				b.WriteByte(',')
			}
			b.WriteString("\n" + inner)
			if err := encodeValue(b, v.Index(i), inner); err != nil {
				return err
			}
		}
		b.WriteString("\n" + indent + "]")
	case reflect.String:
		appendString(b, v.String())
	case reflect.Int, reflect.Int64, reflect.Int32:
		b.Write(strconv.AppendInt(nil, v.Int(), 10))
	case reflect.Uint, reflect.Uint64, reflect.Uint32:
		b.Write(strconv.AppendUint(nil, v.Uint(), 10))
	case reflect.Float64, reflect.Float32:
		appendFloat(b, v.Float())
	case reflect.Bool:
		b.WriteString(strconv.FormatBool(v.Bool()))
	default:
		return fmt.Errorf("result: cannot encode a %s", v.Type())
	}
	return nil
}

// isFlat reports whether every field of struct type t is a scalar or an
// array of scalars (possibly behind a pointer).
func isFlat(t reflect.Type) bool {
	for i := 0; i < t.NumField(); i++ {
		ft := t.Field(i).Type
		if ft.Kind() == reflect.Pointer {
			ft = ft.Elem()
		}
		if ft.Kind() == reflect.Array {
			ft = ft.Elem()
		}
		switch ft.Kind() {
		case reflect.Struct, reflect.Slice, reflect.Map, reflect.Interface, reflect.Pointer, reflect.Array:
			return false
		}
	}
	return true
}

func kindOf(x any) string {
	switch x := x.(type) {
	case nil:
		return "null"
	case bool:
		return "boolean"
	case json.Number:
		return "number " + x.String()
	case string:
		if len(x) > 20 {
			x = x[:20] + "..."
		}
		return "string " + strconv.Quote(x)
	case []any:
		return "array"
	case map[string]any:
		return "object"
	}
	return fmt.Sprintf("%T", x)
}

func join(path, name string) string {
	if path == "" {
		return name
	}
	return path + "." + name
}

// decodeValue stores the decoded JSON tree x into v; path names the member
// in errors.
func decodeValue(v reflect.Value, x any, path string) error {
	if path == "" && v.Kind() != reflect.Struct {
		path = "(top)"
	}
	switch v.Kind() {
	case reflect.Pointer:
		if x == nil {
			v.SetZero()
			return nil
		}
		p := reflect.New(v.Type().Elem())
		if err := decodeValue(p.Elem(), x, path); err != nil {
			return err
		}
		v.Set(p)
	case reflect.Struct:
		obj, ok := x.(map[string]any)
		if !ok {
			return fieldErr(orTop(path), "expected an object, got %s", kindOf(x))
		}
		for _, f := range fieldsOf(v.Type()) {
			m, ok := obj[f.name]
			if !ok {
				continue
			}
			if err := decodeValue(v.Field(f.index), m, join(path, f.name)); err != nil {
				return err
			}
		}
	case reflect.Slice:
		if x == nil {
			v.SetZero()
			return nil
		}
		arr, ok := x.([]any)
		if !ok {
			return fieldErr(path, "expected an array, got %s", kindOf(x))
		}
		s := reflect.MakeSlice(v.Type(), len(arr), len(arr))
		for i, e := range arr {
			if err := decodeValue(s.Index(i), e, fmt.Sprintf("%s[%d]", path, i)); err != nil {
				return err
			}
		}
		v.Set(s)
	case reflect.Array:
		arr, ok := x.([]any)
		if !ok || len(arr) != v.Len() {
			return fieldErr(path, "expected an array of %d numbers, got %s", v.Len(), describeArray(x))
		}
		for i, e := range arr {
			if err := decodeValue(v.Index(i), e, fmt.Sprintf("%s[%d]", path, i)); err != nil {
				return err
			}
		}
	case reflect.String:
		s, ok := x.(string)
		if !ok {
			return fieldErr(path, "expected a string, got %s", kindOf(x))
		}
		v.SetString(s)
	case reflect.Int, reflect.Int64, reflect.Int32:
		n, ok := x.(json.Number)
		i, err := n.Int64()
		if !ok || err != nil || v.OverflowInt(i) {
			return fieldErr(path, "expected an integer, got %s", kindOf(x))
		}
		v.SetInt(i)
	case reflect.Uint, reflect.Uint64, reflect.Uint32:
		n, ok := x.(json.Number)
		var u uint64
		var err error
		if ok {
			u, err = strconv.ParseUint(n.String(), 10, 64)
		}
		if !ok || err != nil || v.OverflowUint(u) {
			return fieldErr(path, "expected an unsigned integer, got %s", kindOf(x))
		}
		v.SetUint(u)
	case reflect.Float64, reflect.Float32:
		var f float64
		switch x := x.(type) {
		case json.Number:
			var err error
			f, err = strconv.ParseFloat(x.String(), 64)
			if err != nil {
				return fieldErr(path, "number %s out of range", x)
			}
		case string:
			switch x {
			case jsonNaN:
				f = math.NaN()
			case jsonPosInf:
				f = math.Inf(1)
			case jsonNegInf:
				f = math.Inf(-1)
			default:
				return fieldErr(path, "expected a number or %q, %q, %q, got %s", jsonNaN, jsonPosInf, jsonNegInf, kindOf(x))
			}
		default:
			return fieldErr(path, "expected a number, got %s", kindOf(x))
		}
		v.SetFloat(f)
	case reflect.Bool:
		bv, ok := x.(bool)
		if !ok {
			return fieldErr(path, "expected true or false, got %s", kindOf(x))
		}
		v.SetBool(bv)
	default:
		return fieldErr(path, "cannot decode into %s", v.Type())
	}
	return nil
}

func orTop(path string) string {
	if path == "" {
		return "(top)"
	}
	return path
}

func describeArray(x any) string {
	if arr, ok := x.([]any); ok {
		return fmt.Sprintf("an array of %d", len(arr))
	}
	return kindOf(x)
}
