package sim

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"

	"trackgate/harness/mot"
)

// Kind is the value of the "kind" key that opens every simulation output.
const Kind = "trackgate-simulation"

// Version is the simulation output format version Write writes and Read
// reads.
const Version = 1

// maxLine is the longest line Read accepts (64 MiB).
const maxLine = 64 << 20

// Record is one simulated run as it is written to and read from a file:
// the run and the scenario it came from.
type Record struct {
	// Scenario is the scenario name and Hash its content hash
	// (scenario.Spec.Name and .Hash).
	Scenario, Hash string
	Run            mot.Run
}

// The wire shapes. Field order is the key order of the output.
type headerOut struct {
	Kind     string `json:"kind"`
	Version  int    `json:"version"`
	Scenario string `json:"scenario"`
	Hash     string `json:"hash"`
	Run      int    `json:"run"`
	Seed     uint64 `json:"seed"`
	Steps    int    `json:"steps"`
}

type stepOut struct {
	Step       int         `json:"step"`
	Time       float64     `json:"time"`
	Detections []detOut    `json:"detections"`
	Objects    []objectOut `json:"objects"`
	Sources    []sourceOut `json:"sources"`
}

type detOut struct {
	ID int       `json:"id"`
	Z  []float64 `json:"z"`
}

type objectOut struct {
	Object string    `json:"object"`
	X      []float64 `json:"x"`
}

type sourceOut struct {
	Detection int    `json:"detection"`
	From      string `json:"from"`
}

// Write writes rec as JSON Lines to w: first a header line
//
//	{"kind":"trackgate-simulation","version":1,"scenario":NAME,"hash":HEX,"run":R,"seed":S,"steps":K}
//
// then one line per step k = 0 … K−1:
//
//	{"step":k,"time":T,"detections":[{"id":I,"z":[…]},…],
//	 "objects":[{"object":ID,"x":[…]},…],"sources":[{"detection":I,"from":ID},…]}
//
// (on one line). "detections" is the scan a tracker sees; "objects" (true
// states of the living objects) and "sources" (where each detection came
// from, "from":"" for clutter) are the truth. Keys always come in this
// order; numbers are written in the shortest form that reads back to the
// same float64 (encoding/json's format); lists are never null. A non-finite
// number is an error naming the step and field, and nothing more is written
// after it.
func Write(w io.Writer, rec Record) error {
	if len(rec.Run.Truth) != len(rec.Run.Scans) {
		return fmt.Errorf("sim: write: %d scans but %d truth records", len(rec.Run.Scans), len(rec.Run.Truth))
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	line, err := json.Marshal(headerOut{
		Kind: Kind, Version: Version, Scenario: rec.Scenario, Hash: rec.Hash,
		Run: rec.Run.Index, Seed: rec.Run.Seed, Steps: len(rec.Run.Scans),
	})
	if err != nil {
		return fmt.Errorf("sim: write header: %w", err)
	}
	line = append(line, '\n')
	bw.Write(line)
	// Step lines are appended by hand into one reused buffer; the result is
	// what json.Marshal(stepOut) gives (TestWriteMatchesEncodingJSON).
	quoted := map[string][]byte{}
	str := func(b []byte, s string) []byte {
		q, ok := quoted[s]
		if !ok {
			q, _ = json.Marshal(s) // a string always marshals
			quoted[s] = q
		}
		return append(b, q...)
	}
	for k, sc := range rec.Run.Scans {
		tr := rec.Run.Truth[k]
		if sc.Step != tr.Step {
			return fmt.Errorf("sim: write: scan %d has step %d but its truth step %d", k, sc.Step, tr.Step)
		}
		if math.IsNaN(sc.Time) || math.IsInf(sc.Time, 0) {
			return fmt.Errorf("sim: write: step %d: time: expected a finite number, got %v", sc.Step, sc.Time)
		}
		b := line[:0]
		b = append(b, `{"step":`...)
		b = strconv.AppendInt(b, int64(sc.Step), 10)
		b = append(b, `,"time":`...)
		b = appendFloat(b, sc.Time)
		b = append(b, `,"detections":[`...)
		for i, d := range sc.Detections {
			if err := finite(d.Z); err != nil {
				return fmt.Errorf("sim: write: step %d: detection %d: z: %w", sc.Step, d.ID, err)
			}
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, `{"id":`...)
			b = strconv.AppendInt(b, int64(d.ID), 10)
			b = append(b, `,"z":`...)
			b = appendFloats(b, d.Z)
			b = append(b, '}')
		}
		b = append(b, `],"objects":[`...)
		for i, o := range tr.Objects {
			if err := finite(o.X); err != nil {
				return fmt.Errorf("sim: write: step %d: object %q: x: %w", sc.Step, o.Object, err)
			}
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, `{"object":`...)
			b = str(b, o.Object)
			b = append(b, `,"x":`...)
			b = appendFloats(b, o.X)
			b = append(b, '}')
		}
		b = append(b, `],"sources":[`...)
		for i, o := range tr.Origins {
			if i > 0 {
				b = append(b, ',')
			}
			b = append(b, `{"detection":`...)
			b = strconv.AppendInt(b, int64(o.Detection), 10)
			b = append(b, `,"from":`...)
			b = str(b, o.Object)
			b = append(b, '}')
		}
		b = append(b, "]}\n"...)
		if _, err := bw.Write(b); err != nil {
			return fmt.Errorf("sim: write: %w", err)
		}
		line = b
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("sim: write: %w", err)
	}
	return nil
}

// appendFloat appends v in encoding/json's number format: the shortest
// decimal that reads back to v, in 'f' form for 1e-6 ≤ |v| < 1e21 (and 0),
// otherwise in 'e' form with a two-digit negative exponent shortened
// (1e-07 → 1e-7). v must be finite.
func appendFloat(b []byte, v float64) []byte {
	abs := math.Abs(v)
	format := byte('f')
	if abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, v, format, -1, 64)
	if format == 'e' {
		n := len(b)
		if n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

func appendFloats(b []byte, v []float64) []byte {
	b = append(b, '[')
	for i, x := range v {
		if i > 0 {
			b = append(b, ',')
		}
		b = appendFloat(b, x)
	}
	return append(b, ']')
}

func finite(v []float64) error {
	for i, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("[%d]: expected a finite number, got %v", i, x)
		}
	}
	return nil
}

// The read shapes: pointers tell a missing key from a zero value.
type headerIn struct {
	Kind     *string `json:"kind"`
	Version  *int    `json:"version"`
	Scenario *string `json:"scenario"`
	Hash     *string `json:"hash"`
	Run      *int    `json:"run"`
	Seed     *uint64 `json:"seed"`
	Steps    *int    `json:"steps"`
}

type stepIn struct {
	Step       *int        `json:"step"`
	Time       *float64    `json:"time"`
	Detections *[]detIn    `json:"detections"`
	Objects    *[]objectIn `json:"objects"`
	Sources    *[]sourceIn `json:"sources"`
}

type detIn struct {
	ID *int       `json:"id"`
	Z  *[]float64 `json:"z"`
}

type objectIn struct {
	Object *string    `json:"object"`
	X      *[]float64 `json:"x"`
}

type sourceIn struct {
	Detection *int    `json:"detection"`
	From      *string `json:"from"`
}

// Read parses simulation output written by Write. name is used in error
// messages, which read "name:LINE: field: what was expected". Read checks
// the header (kind, version, every key present), that the steps are 0, 1, …
// in order and exactly as many as the header says, that every key is
// present and no unknown key appears, that detection ids are non-negative
// and unique in the run, that every detection has exactly one source and
// every source names a detection of its step, and that all measurement
// vectors (and all state vectors) have one length.
func Read(r io.Reader, name string) (Record, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), maxLine)
	lineNo := 0
	fail := func(format string, args ...any) error {
		return fmt.Errorf("%s:%d: %s", name, lineNo, fmt.Sprintf(format, args...))
	}
	next := func() ([]byte, bool) {
		if !sc.Scan() {
			return nil, false
		}
		lineNo++
		return bytes.TrimSuffix(sc.Bytes(), []byte("\r")), true
	}

	var rec Record
	line, ok := next()
	if !ok {
		if err := sc.Err(); err != nil {
			return rec, fmt.Errorf("%s:1: %v", name, err)
		}
		return rec, fmt.Errorf("%s:1: expected a header line, got an empty file", name)
	}
	var h headerIn
	if err := decodeStrict(line, &h); err != nil {
		return rec, fail("header: %v", err)
	}
	switch {
	case h.Kind == nil:
		return rec, fail(`header: missing "kind"`)
	case *h.Kind != Kind:
		return rec, fail(`header: kind: expected %q, got %q`, Kind, *h.Kind)
	case h.Version == nil:
		return rec, fail(`header: missing "version"`)
	case *h.Version != Version:
		return rec, fail("header: version: expected %d, got %d", Version, *h.Version)
	case h.Scenario == nil:
		return rec, fail(`header: missing "scenario"`)
	case h.Hash == nil:
		return rec, fail(`header: missing "hash"`)
	case h.Run == nil:
		return rec, fail(`header: missing "run"`)
	case *h.Run < 0:
		return rec, fail("header: run: expected at least 0, got %d", *h.Run)
	case h.Seed == nil:
		return rec, fail(`header: missing "seed"`)
	case h.Steps == nil:
		return rec, fail(`header: missing "steps"`)
	case *h.Steps < 0:
		return rec, fail("header: steps: expected at least 0, got %d", *h.Steps)
	}
	rec.Scenario, rec.Hash = *h.Scenario, *h.Hash
	rec.Run = mot.Run{Index: *h.Run, Seed: *h.Seed}
	steps := *h.Steps

	ids := map[int]bool{}
	zLen, xLen := -1, -1
	for k := 0; ; k++ {
		line, ok := next()
		if !ok {
			if err := sc.Err(); err != nil {
				lineNo++
				return rec, fail("%v", err)
			}
			if k < steps {
				return rec, fmt.Errorf("%s:%d: expected %d steps as the header says, got %d (the file is cut short)", name, lineNo, steps, k)
			}
			break
		}
		if k >= steps {
			return rec, fail("expected the end of the file after %d steps, got another line", steps)
		}
		var s stepIn
		if err := decodeStrict(line, &s); err != nil {
			return rec, fail("step %d: %v", k, err)
		}
		switch {
		case s.Step == nil:
			return rec, fail(`missing "step"`)
		case *s.Step != k:
			return rec, fail("step: expected %d, got %d", k, *s.Step)
		case s.Time == nil:
			return rec, fail(`step %d: missing "time"`, k)
		case s.Detections == nil:
			return rec, fail(`step %d: missing or null "detections"`, k)
		case s.Objects == nil:
			return rec, fail(`step %d: missing or null "objects"`, k)
		case s.Sources == nil:
			return rec, fail(`step %d: missing or null "sources"`, k)
		}
		scan := mot.Scan{Step: k, Time: *s.Time, Detections: make([]mot.Detection, len(*s.Detections))}
		step := map[int]bool{}
		for i, d := range *s.Detections {
			switch {
			case d.ID == nil:
				return rec, fail(`step %d: detections[%d]: missing "id"`, k, i)
			case *d.ID < 0:
				return rec, fail("step %d: detections[%d].id: expected a non-negative id, got %d", k, i, *d.ID)
			case ids[*d.ID]:
				return rec, fail("step %d: detections[%d].id: expected an id unique in the run, %d is used before", k, i, *d.ID)
			case d.Z == nil:
				return rec, fail(`step %d: detections[%d]: missing or null "z"`, k, i)
			}
			if zLen < 0 {
				zLen = len(*d.Z)
			}
			if len(*d.Z) != zLen || zLen == 0 {
				return rec, fail("step %d: detections[%d].z: expected %d values like the first detection, got %d", k, i, max(zLen, 1), len(*d.Z))
			}
			ids[*d.ID] = true
			step[*d.ID] = false
			scan.Detections[i] = mot.Detection{ID: *d.ID, Z: *d.Z}
		}
		truth := mot.Truth{Step: k, Objects: make([]mot.TruthState, len(*s.Objects)), Origins: make([]mot.Origin, len(*s.Sources))}
		names := map[string]bool{}
		for i, o := range *s.Objects {
			switch {
			case o.Object == nil:
				return rec, fail(`step %d: objects[%d]: missing "object"`, k, i)
			case *o.Object == "":
				return rec, fail(`step %d: objects[%d].object: expected a non-empty id`, k, i)
			case names[*o.Object]:
				return rec, fail("step %d: objects[%d].object: %q appears twice", k, i, *o.Object)
			case o.X == nil:
				return rec, fail(`step %d: objects[%d]: missing or null "x"`, k, i)
			}
			if xLen < 0 {
				xLen = len(*o.X)
			}
			if len(*o.X) != xLen || xLen == 0 {
				return rec, fail("step %d: objects[%d].x: expected %d values like the first state, got %d", k, i, max(xLen, 1), len(*o.X))
			}
			names[*o.Object] = true
			truth.Objects[i] = mot.TruthState{Object: *o.Object, X: *o.X}
		}
		for i, o := range *s.Sources {
			switch {
			case o.Detection == nil:
				return rec, fail(`step %d: sources[%d]: missing "detection"`, k, i)
			case o.From == nil:
				return rec, fail(`step %d: sources[%d]: missing "from"`, k, i)
			}
			done, ok := step[*o.Detection]
			switch {
			case !ok:
				return rec, fail("step %d: sources[%d].detection: expected the id of a detection of this step, got %d", k, i, *o.Detection)
			case done:
				return rec, fail("step %d: sources[%d].detection: detection %d has two sources", k, i, *o.Detection)
			}
			step[*o.Detection] = true
			truth.Origins[i] = mot.Origin{Detection: *o.Detection, Object: *o.From}
		}
		if len(*s.Sources) != len(*s.Detections) {
			return rec, fail("step %d: sources: expected one per detection (%d), got %d", k, len(*s.Detections), len(*s.Sources))
		}
		rec.Run.Scans = append(rec.Run.Scans, scan)
		rec.Run.Truth = append(rec.Run.Truth, truth)
	}
	return rec, nil
}

// decodeStrict decodes one JSON object from line into v, rejecting unknown
// keys and anything after the object.
func decodeStrict(line []byte, v any) error {
	if len(bytes.TrimSpace(line)) == 0 {
		return errors.New("expected a JSON object, got an empty line")
	}
	dec := json.NewDecoder(bytes.NewReader(line))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return err
	}
	if _, err := dec.Token(); err != io.EOF {
		return errors.New("expected the end of the line after the JSON object")
	}
	return nil
}
