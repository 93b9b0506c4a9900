package golden

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"

	"trackgate/harness/mot"
)

// MaxLine is the longest line, in bytes, a reader accepts.
const MaxLine = 64 << 20

// num is a golden float: a JSON number or one of "NaN", "+Inf", "-Inf".
type num float64

func (n *num) UnmarshalJSON(b []byte) error {
	if len(b) > 0 && b[0] == '"' {
		switch string(b) {
		case `"NaN"`:
			*n = num(math.NaN())
		case `"+Inf"`:
			*n = num(math.Inf(1))
		case `"-Inf"`:
			*n = num(math.Inf(-1))
		default:
			return fmt.Errorf("expected a number, \"NaN\", \"+Inf\" or \"-Inf\", got %s", b)
		}
		return nil
	}
	if string(b) == "null" {
		return errors.New("expected a number, got null")
	}
	v, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return fmt.Errorf("expected a number, got %s", b)
	}
	*n = num(v)
	return nil
}

func floats(v []num) []float64 {
	out := make([]float64, len(v))
	for i, x := range v {
		out[i] = float64(x)
	}
	return out
}

type jheader struct {
	Golden       *int    `json:"golden"`
	Kind         *string `json:"kind"`
	Scenario     *string `json:"scenario"`
	ScenarioHash *string `json:"scenario_sha256"`
	Tracker      string  `json:"tracker"`
	Run          *int    `json:"run"`
	Seed         *uint64 `json:"seed"`
	Protocol     int     `json:"protocol"`
	Trackgate    string  `json:"trackgate"`
	Go           *string `json:"go"`
	GOOS         *string `json:"goos"`
	GOARCH       *string `json:"goarch"`
	GOAMD64      string  `json:"goamd64"`
}

type jdet struct {
	ID *int  `json:"id"`
	Z  []num `json:"z"`
}

type jobj struct {
	Object *string `json:"object"`
	X      []num   `json:"x"`
}

type jorigin struct {
	Detection *int    `json:"detection"`
	Object    *string `json:"object"`
}

type jstep struct {
	Step       *int      `json:"step"`
	Time       *num      `json:"time"`
	Detections []jdet    `json:"detections"`
	Truth      []jobj    `json:"truth"`
	Origins    []jorigin `json:"origins"`
}

type jtrack struct {
	Track     *string `json:"track"`
	Mean      []num   `json:"mean"`
	Cov       [][]num `json:"cov"`
	Detection *int    `json:"detection"`
}

type jframe struct {
	Step   *int     `json:"step"`
	Tracks []jtrack `json:"tracks"`
}

type jrunvalue struct {
	Run    *int           `json:"run"`
	Seed   *uint64        `json:"seed"`
	Values map[string]num `json:"values"`
}

type jmetric struct {
	Metric *string `json:"metric"`
	Step   *int    `json:"step"`
	Value  *num    `json:"value"`
}

// lineError is an error at one line of a golden file.
type lineError struct {
	name string
	line int
	msg  string
}

func (e *lineError) Error() string { return fmt.Sprintf("%s:%d: %s", e.name, e.line, e.msg) }

// decodeLine decodes one JSON object strictly into v and returns a message
// naming the field and what was expected.
func decodeLine(line []byte, v any) string {
	dec := json.NewDecoder(bytes.NewReader(line))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			return fmt.Sprintf("column %d: invalid JSON: %v", se.Offset, se)
		case errors.As(err, &te):
			return fmt.Sprintf("field %q: expected %s, got JSON %s", te.Field, te.Type, te.Value)
		case errors.Is(err, io.ErrUnexpectedEOF), errors.Is(err, io.EOF):
			return "invalid JSON: the object is not complete"
		}
		return err.Error()
	}
	if dec.More() {
		return "unexpected data after the JSON object"
	}
	if _, err := dec.Token(); err != io.EOF {
		return "unexpected data after the JSON object"
	}
	return ""
}

// Read reads a golden file from r; name is used in error messages, which
// read "name:line: what was expected".
func Read(r io.Reader, name string) (File, error) {
	var f File
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), MaxLine)
	n := 0
	fail := func(format string, args ...any) (File, error) {
		return File{}, &lineError{name, n, fmt.Sprintf(format, args...)}
	}
	lastStep := math.MinInt
	type metricKey struct {
		name string
		step int
	}
	seenMetric := map[metricKey]int{}
	for sc.Scan() {
		n++
		line := bytes.TrimSuffix(sc.Bytes(), []byte("\r"))
		if len(bytes.TrimSpace(line)) == 0 {
			return fail("empty line; expected a JSON object")
		}
		if n == 1 {
			h, msg := parseHeader(line)
			if msg != "" {
				return fail("header: %s", msg)
			}
			f.Header = h
			continue
		}
		var step int
		switch f.Header.Kind {
		case Tape:
			s, msg := parseStep(line)
			if msg != "" {
				return fail("%s", msg)
			}
			step = s.Scan.Step
			f.Steps = append(f.Steps, s)
		case Reference, Output:
			fr, msg := parseFrame(line)
			if msg != "" {
				return fail("%s", msg)
			}
			step = fr.Step
			f.Frames = append(f.Frames, fr)
		case Metrics:
			m, msg := parseMetric(line)
			if msg != "" {
				return fail("%s", msg)
			}
			key := metricKey{m.Name, m.Step}
			if prev, dup := seenMetric[key]; dup {
				return fail("metric %q step %d given twice (first at line %d)", m.Name, m.Step, prev)
			}
			seenMetric[key] = n
			f.Metrics = append(f.Metrics, m)
			continue
		case RunValues:
			r, msg := parseRunValue(line)
			if msg != "" {
				return fail("%s", msg)
			}
			if k := len(f.Runs); k > 0 && r.Run <= f.Runs[k-1].Run {
				return fail("field \"run\": expected a run after %d, got %d", f.Runs[k-1].Run, r.Run)
			}
			f.Runs = append(f.Runs, r)
			continue
		}
		if step <= lastStep {
			return fail("field \"step\": expected a step after %d, got %d", lastStep, step)
		}
		lastStep = step
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return File{}, &lineError{name, n + 1, fmt.Sprintf("line longer than %d bytes", MaxLine)}
		}
		return File{}, fmt.Errorf("%s: %w", name, err)
	}
	if n == 0 {
		return File{}, &lineError{name, 1, "empty file; expected a header line"}
	}
	return f, nil
}

// ReadFresh reads the golden at path and checks it against the current
// scenario. Only a Fresh golden is returned; for a Stale or Foreign one the
// File is empty, so that it cannot be compared by mistake.
func ReadFresh(path, scenario, hash string) (File, Freshness, error) {
	f, err := ReadFile(path)
	if err != nil {
		return File{}, Fresh, err
	}
	if fr := f.Header.Check(scenario, hash); fr != Fresh {
		return File{}, fr, nil
	}
	return f, Fresh, nil
}

// ReadFile reads the golden file at path.
func ReadFile(path string) (File, error) {
	fd, err := os.Open(path)
	if err != nil {
		return File{}, err
	}
	defer fd.Close()
	return Read(fd, path)
}

func parseHeader(line []byte) (Header, string) {
	var j jheader
	if msg := decodeLine(line, &j); msg != "" {
		return Header{}, msg
	}
	switch {
	case j.Golden == nil:
		return Header{}, `missing field "golden" (the format version)`
	case *j.Golden != FormatVersion:
		return Header{}, fmt.Sprintf("field \"golden\": format version %d, this trackgate reads %d", *j.Golden, FormatVersion)
	case j.Kind == nil:
		return Header{}, `missing field "kind"`
	case !Kind(*j.Kind).Valid():
		return Header{}, fmt.Sprintf("field \"kind\": expected tape, reference, output, metrics or run-values, got %q", *j.Kind)
	case j.Scenario == nil || *j.Scenario == "":
		return Header{}, `missing field "scenario"`
	case j.ScenarioHash == nil || *j.ScenarioHash == "":
		return Header{}, `missing field "scenario_sha256"`
	case j.Run == nil:
		return Header{}, `missing field "run"`
	case *j.Run < 0:
		return Header{}, fmt.Sprintf("field \"run\": expected a run index ≥ 0, got %d", *j.Run)
	case j.Seed == nil:
		return Header{}, `missing field "seed"`
	case j.Go == nil || j.GOOS == nil || j.GOARCH == nil:
		return Header{}, `missing platform field "go", "goos" or "goarch"`
	}
	if msg := trackerFits(Kind(*j.Kind), j.Tracker); msg != "" {
		return Header{}, `field "tracker": ` + msg
	}
	return Header{
		Format: *j.Golden, Kind: Kind(*j.Kind), Scenario: *j.Scenario, ScenarioHash: *j.ScenarioHash,
		Tracker: j.Tracker, Run: *j.Run, Seed: *j.Seed, Protocol: j.Protocol, Trackgate: j.Trackgate,
		Platform: Platform{Go: *j.Go, OS: *j.GOOS, Arch: *j.GOARCH, AMD64: j.GOAMD64},
	}, ""
}

func parseStep(line []byte) (Step, string) {
	var j jstep
	if msg := decodeLine(line, &j); msg != "" {
		return Step{}, msg
	}
	if j.Step == nil || *j.Step < 0 {
		return Step{}, `field "step": expected a step number ≥ 0`
	}
	if j.Time == nil {
		return Step{}, `missing field "time"`
	}
	s := Step{Scan: mot.Scan{Step: *j.Step, Time: float64(*j.Time)}, Truth: mot.Truth{Step: *j.Step}}
	ids := map[int]bool{}
	for i, d := range j.Detections {
		if d.ID == nil || *d.ID < 0 {
			return Step{}, fmt.Sprintf("field \"detections[%d].id\": expected a detection id ≥ 0", i)
		}
		if ids[*d.ID] {
			return Step{}, fmt.Sprintf("field \"detections[%d].id\": detection id %d appears twice", i, *d.ID)
		}
		ids[*d.ID] = true
		if len(d.Z) == 0 {
			return Step{}, fmt.Sprintf("field \"detections[%d].z\": expected a non-empty array of numbers", i)
		}
		s.Scan.Detections = append(s.Scan.Detections, mot.Detection{ID: *d.ID, Z: floats(d.Z)})
	}
	for i, o := range j.Truth {
		if o.Object == nil || *o.Object == "" {
			return Step{}, fmt.Sprintf("field \"truth[%d].object\": expected an object id", i)
		}
		if len(o.X) == 0 {
			return Step{}, fmt.Sprintf("field \"truth[%d].x\": expected a non-empty array of numbers", i)
		}
		s.Truth.Objects = append(s.Truth.Objects, mot.TruthState{Object: *o.Object, X: floats(o.X)})
	}
	for i, o := range j.Origins {
		if o.Detection == nil || !ids[*o.Detection] {
			return Step{}, fmt.Sprintf("field \"origins[%d].detection\": expected the id of a detection of this step", i)
		}
		if o.Object == nil {
			return Step{}, fmt.Sprintf("field \"origins[%d].object\": expected an object id or \"\" for clutter", i)
		}
		s.Truth.Origins = append(s.Truth.Origins, mot.Origin{Detection: *o.Detection, Object: *o.Object})
	}
	return s, ""
}

func parseFrame(line []byte) (mot.Frame, string) {
	var j jframe
	if msg := decodeLine(line, &j); msg != "" {
		return mot.Frame{}, msg
	}
	if j.Step == nil || *j.Step < 0 {
		return mot.Frame{}, `field "step": expected a step number ≥ 0`
	}
	if j.Tracks == nil {
		return mot.Frame{}, `missing field "tracks" (an array, possibly empty)`
	}
	fr := mot.Frame{Step: *j.Step, Tracks: []mot.Estimate{}}
	names := map[string]bool{}
	for i, t := range j.Tracks {
		if t.Track == nil || *t.Track == "" {
			return mot.Frame{}, fmt.Sprintf("field \"tracks[%d].track\": expected a track name", i)
		}
		if names[*t.Track] {
			return mot.Frame{}, fmt.Sprintf("field \"tracks[%d].track\": track %q appears twice", i, *t.Track)
		}
		names[*t.Track] = true
		n := len(t.Mean)
		if n == 0 {
			return mot.Frame{}, fmt.Sprintf("field \"tracks[%d].mean\": expected a non-empty array of numbers", i)
		}
		e := mot.Estimate{Track: *t.Track, Mean: floats(t.Mean), Detection: mot.NoDetection}
		if t.Cov != nil {
			if len(t.Cov) != n {
				return mot.Frame{}, fmt.Sprintf("field \"tracks[%d].cov\": expected %d rows (the mean's length), got %d", i, n, len(t.Cov))
			}
			e.Cov = mot.NewMat(n, n)
			for r, row := range t.Cov {
				if len(row) != n {
					return mot.Frame{}, fmt.Sprintf("field \"tracks[%d].cov[%d]\": expected %d numbers, got %d", i, r, n, len(row))
				}
				for c, v := range row {
					e.Cov.Data[r*n+c] = float64(v)
				}
			}
		}
		if t.Detection != nil {
			if *t.Detection < mot.NoDetection {
				return mot.Frame{}, fmt.Sprintf("field \"tracks[%d].detection\": expected a detection id ≥ 0 or -1, got %d", i, *t.Detection)
			}
			e.Detection, e.HasDetection = *t.Detection, true
		}
		fr.Tracks = append(fr.Tracks, e)
	}
	return fr, ""
}

func parseMetric(line []byte) (Metric, string) {
	var j jmetric
	if msg := decodeLine(line, &j); msg != "" {
		return Metric{}, msg
	}
	if j.Metric == nil || *j.Metric == "" {
		return Metric{}, `missing field "metric" (the metric name)`
	}
	if j.Value == nil {
		return Metric{}, `missing field "value"`
	}
	m := Metric{Name: *j.Metric, Step: -1, Value: float64(*j.Value)}
	if j.Step != nil {
		if *j.Step < 0 {
			return Metric{}, fmt.Sprintf("field \"step\": expected a step number ≥ 0, got %d", *j.Step)
		}
		m.Step = *j.Step
	}
	return m, ""
}

func parseRunValue(line []byte) (RunValue, string) {
	var j jrunvalue
	if msg := decodeLine(line, &j); msg != "" {
		return RunValue{}, msg
	}
	switch {
	case j.Run == nil || *j.Run < 0:
		return RunValue{}, `field "run": expected a run index ≥ 0`
	case j.Seed == nil:
		return RunValue{}, `missing field "seed"`
	case j.Values == nil:
		return RunValue{}, `missing field "values" (an object of metric values)`
	}
	r := RunValue{Run: *j.Run, Seed: *j.Seed, Values: make(map[string]float64, len(j.Values))}
	for n, v := range j.Values {
		if n == "" {
			return RunValue{}, `field "values": expected metric names, got ""`
		}
		r.Values[n] = float64(v)
	}
	return r, ""
}
