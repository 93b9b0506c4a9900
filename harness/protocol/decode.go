package protocol

import (
	"bufio"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strconv"

	"trackgate/harness/mot"
)

// Kind classifies a decoding error.
type Kind int

// The kinds of decoding error.
const (
	// Syntax: the line is not JSON.
	Syntax Kind = iota + 1
	// Shape: the line is JSON but not the expected message: a field is
	// missing, has the wrong type or the wrong message type.
	Shape
	// NonFinite: a number is NaN, infinite or overflows float64.
	NonFinite
	// TooLong: the line is longer than the decoder's cap.
	TooLong
)

func (k Kind) String() string {
	switch k {
	case Syntax:
		return "invalid JSON"
	case Shape:
		return "unexpected message shape"
	case NonFinite:
		return "non-finite number"
	case TooLong:
		return "line too long"
	}
	return "Kind(" + strconv.Itoa(int(k)) + ")"
}

// Error is a decoding error at a position.
type Error struct {
	Source string // e.g. "tracker stdout"
	Line   int    // 1-based line number; 0 when unknown
	Col    int    // 1-based byte column; 0 when unknown
	Field  string // path of the offending field, e.g. tracks[2].mean[1]
	Kind   Kind
	Msg    string
}

func (e *Error) Error() string {
	s := e.Source
	if s == "" {
		s = "input"
	}
	if e.Line > 0 {
		s += ":" + strconv.Itoa(e.Line)
		if e.Col > 0 {
			s += ":" + strconv.Itoa(e.Col)
		}
	}
	s += ": "
	if e.Field != "" {
		s += e.Field + ": "
	}
	return s + e.Msg
}

// DefaultMaxLine is the line size cap used when none is given: 4 MiB.
const DefaultMaxLine = 4 << 20

// Decoder reads messages line by line, counting lines. Frames it returns
// share large backing arrays that it never reuses, so they stay valid and
// unchanged after later calls. A Decoder is not safe for concurrent use.
type Decoder struct {
	r       *bufio.Reader
	source  string
	max     int
	line    int
	long    []byte // accumulates a line longer than the reader's buffer
	raw     []byte
	p       parser
	scratch []float64
	floats  []float64 // arena for means and covariances
	ids     map[string]string
}

// NewDecoder returns a Decoder reading r. source names the stream in errors
// ("tracker stdout"); maxLine caps the length of a line in bytes (0 means
// DefaultMaxLine).
func NewDecoder(r io.Reader, source string, maxLine int) *Decoder {
	if maxLine <= 0 {
		maxLine = DefaultMaxLine
	}
	return &Decoder{r: bufio.NewReaderSize(r, 64<<10), source: source, max: maxLine, ids: map[string]string{}}
}

// Line returns the number of the last line read.
func (d *Decoder) Line() int { return d.line }

// SetLine sets the line counter, so that numbering can restart (for
// example at the start of each run in a process serving several runs).
func (d *Decoder) SetLine(n int) { d.line = n }

// Raw returns the bytes of the last line read, without its line end. They
// stay valid until the next read.
func (d *Decoder) Raw() []byte { return d.raw }

// ReadLine reads the next line, without its line end. It returns io.EOF at
// the end of input (a final line without a newline is still returned
// first), an *Error of kind TooLong for a line over the cap (Raw then holds
// its first 256 bytes), and any error of the underlying reader as is.
func (d *Decoder) ReadLine() ([]byte, error) {
	d.long = d.long[:0]
	d.raw = nil
	for {
		frag, err := d.r.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			if len(d.long)+len(frag) > d.max {
				d.line++
				d.long = append(d.long, frag[:min(len(frag), 256)]...)
				d.raw = d.long[:min(len(d.long), 256)]
				return nil, &Error{Source: d.source, Line: d.line, Kind: TooLong,
					Msg: "line longer than " + strconv.Itoa(d.max) + " bytes"}
			}
			d.long = append(d.long, frag...)
			continue
		}
		line := frag
		if len(d.long) > 0 {
			d.long = append(d.long, frag...)
			line = d.long
		}
		if err != nil && (err != io.EOF || len(line) == 0) {
			return nil, err
		}
		d.line++
		n := len(line)
		if n > 0 && line[n-1] == '\n' {
			n--
			if n > 0 && line[n-1] == '\r' {
				n--
			}
		}
		if n > d.max {
			d.raw = line[:min(len(line), 256)]
			return nil, &Error{Source: d.source, Line: d.line, Kind: TooLong,
				Msg: "line longer than " + strconv.Itoa(d.max) + " bytes"}
		}
		d.raw = line[:n]
		return d.raw, nil
	}
}

func (d *Decoder) wrap(e *Error) error {
	if e == nil {
		return nil
	}
	e.Source, e.Line = d.source, d.line
	return e
}

// ReadReady reads a line and decodes it as a ready message.
func (d *Decoder) ReadReady() (Ready, error) {
	line, err := d.ReadLine()
	if err != nil {
		return Ready{}, err
	}
	r, e := parseReady(&d.p, line)
	return r, d.wrap(e)
}

// ReadTracks reads a line and decodes it as a tracks message into f,
// replacing its contents (f.Tracks is reset to length 0 and appended to;
// pass a Frame with a nil Tracks slice to get a fresh one).
func (d *Decoder) ReadTracks(f *mot.Frame) error {
	line, err := d.ReadLine()
	if err != nil {
		return err
	}
	return d.wrap(d.parseTracks(line, f))
}

// ReadRequest reads a line and decodes it as a harness → tracker message.
func (d *Decoder) ReadRequest() (Request, error) {
	line, err := d.ReadLine()
	if err != nil {
		return Request{}, err
	}
	r, e := parseRequest(&d.p, line)
	return r, d.wrap(e)
}

// ParseReady decodes one line as a ready message. Errors are *Error
// without a line number.
func ParseReady(line []byte) (Ready, error) {
	var p parser
	r, e := parseReady(&p, line)
	if e != nil {
		return r, e
	}
	return r, nil
}

// ParseTracks decodes one line as a tracks message.
func ParseTracks(line []byte) (mot.Frame, error) {
	d := Decoder{ids: map[string]string{}}
	var f mot.Frame
	if e := d.parseTracks(line, &f); e != nil {
		return f, e
	}
	return f, nil
}

// ParseRequest decodes one line as a harness → tracker message.
func ParseRequest(line []byte) (Request, error) {
	var p parser
	r, e := parseRequest(&p, line)
	if e != nil {
		return r, e
	}
	return r, nil
}

// messageType reads the members of the top-level object until "type" and
// returns its value; the parser is left at the start so that the caller
// parses the object again in full. Messages are small, so the second pass
// costs little and keeps each parser simple.
func messageType(p *parser, line []byte) (string, *Error) {
	p.reset(line)
	if !p.expect('{') {
		return "", p.err
	}
	first := true
	for p.more('}', &first) {
		k, ok := p.key()
		if !ok {
			return "", p.err
		}
		if string(k) == "type" {
			at := p.i
			if p.peek() != '"' {
				p.skip(0)
				if p.err != nil {
					return "", p.err
				}
				return "", &Error{Kind: Shape, Col: at + 1, Field: "type", Msg: "want a string"}
			}
			s, ok := p.str()
			if !ok {
				return "", p.err
			}
			p.reset(line)
			return s, nil
		}
		if !p.skip(0) {
			return "", p.err
		}
	}
	if p.err != nil {
		return "", p.err
	}
	p.end()
	if p.err != nil {
		return "", p.err
	}
	return "", &Error{Kind: Shape, Col: 1, Field: "type", Msg: "missing"}
}

func wrongType(p *parser, got, want string) *Error {
	// A syntax error anywhere in the line takes precedence.
	p.reset(p.b)
	if p.skip(0) && p.end() {
		return &Error{Kind: Shape, Col: 1, Field: "type", Msg: "got " + strconv.Quote(got) + ", want " + strconv.Quote(want)}
	}
	return p.err
}

func missing(field string) *Error {
	return &Error{Kind: Shape, Col: 1, Field: field, Msg: "missing"}
}

func parseReady(p *parser, line []byte) (Ready, *Error) {
	var r Ready
	t, e := messageType(p, line)
	if e != nil {
		return r, e
	}
	if t != TypeReady {
		return r, wrongType(p, t, TypeReady)
	}
	p.expect('{')
	first := true
	var haveProto, haveName bool
	for p.more('}', &first) {
		k, ok := p.key()
		if !ok {
			break
		}
		switch string(k) {
		case "protocol":
			n, _, ok := p.integer(func() string { return "protocol" })
			if ok {
				r.Protocol, haveProto = int(n), true
			}
		case "tracker":
			at := p.i
			if p.peek() != '"' {
				p.fail(Shape, at, "tracker", "want a string")
				break
			}
			r.Name, _ = p.str()
			p.named("tracker")
			haveName = true
		case "version":
			at := p.i
			if p.peek() != '"' {
				p.fail(Shape, at, "version", "want a string")
				break
			}
			r.Version, _ = p.str()
			p.named("version")
		case "reports":
			if !p.expect('{') {
				break
			}
			f2 := true
			for p.more('}', &f2) {
				k2, ok := p.key()
				if !ok {
					break
				}
				switch string(k2) {
				case "covariance":
					r.Covariance, _ = p.boolean("reports.covariance")
				case "detection":
					r.Association, _ = p.boolean("reports.detection")
				default:
					p.skip(0)
				}
			}
		case "many_runs":
			r.ManyRuns, _ = p.boolean("many_runs")
		default:
			p.skip(0)
		}
		if p.err != nil {
			break
		}
	}
	p.end()
	if e := p.finish(); e != nil {
		return r, e
	}
	if !haveProto {
		return r, missing("protocol")
	}
	if !haveName {
		return r, missing("tracker")
	}
	return r, nil
}

func (d *Decoder) alloc(v []float64) []float64 {
	if len(v) > cap(d.floats)-len(d.floats) {
		d.floats = make([]float64, 0, max(4096, len(v)))
	}
	n := len(d.floats)
	d.floats = append(d.floats, v...)
	return d.floats[n : n+len(v) : n+len(v)]
}

func (d *Decoder) intern(b []byte) string {
	if s, ok := d.ids[string(b)]; ok {
		return s
	}
	s := string(b)
	if len(d.ids) < 1<<16 {
		d.ids[s] = s
	}
	return s
}

func trackField(i int, rest string) string {
	return "tracks[" + strconv.Itoa(i) + "]" + rest
}

func (d *Decoder) parseTracks(line []byte, f *mot.Frame) *Error {
	p := &d.p
	t, e := messageType(p, line)
	if e != nil {
		return e
	}
	if t != TypeTracks {
		return wrongType(p, t, TypeTracks)
	}
	f.Step = 0
	f.Tracks = f.Tracks[:0]
	p.expect('{')
	first := true
	var haveStep, haveTracks bool
	for p.more('}', &first) {
		k, ok := p.key()
		if !ok {
			break
		}
		switch string(k) {
		case "step":
			n, _, ok := p.integer(func() string { return "step" })
			if ok {
				f.Step, haveStep = int(n), true
			}
		case "tracks":
			haveTracks = true
			if p.peek() != '[' {
				p.fail(Shape, p.i, "tracks", "want an array")
				break
			}
			p.i++
			f2 := true
			for i := 0; p.more(']', &f2); i++ {
				d.parseTrack(i, f)
				if p.err != nil {
					break
				}
			}
		default:
			p.skip(0)
		}
		if p.err != nil {
			break
		}
	}
	p.end()
	if e := p.finish(); e != nil {
		return e
	}
	if !haveStep {
		return missing("step")
	}
	if !haveTracks {
		return missing("tracks")
	}
	return nil
}

func (d *Decoder) parseTrack(i int, f *mot.Frame) {
	p := &d.p
	if p.peek() != '{' {
		p.fail(Shape, p.i, trackField(i, ""), "want an object")
		return
	}
	p.i++
	var t mot.Estimate
	t.Detection = mot.NoDetection
	var haveID, haveMean bool
	first := true
	for p.more('}', &first) {
		k, ok := p.key()
		if !ok {
			return
		}
		switch string(k) {
		case "id":
			haveID = true
			at := p.i
			switch c := p.peek(); {
			case c == '"':
				start := p.i
				raw, esc, ok := p.rawString()
				if !ok {
					p.named(trackField(i, ".id"))
					return
				}
				if esc {
					var s string
					_ = json.Unmarshal(p.b[start:p.i], &s)
					t.Track = s
				} else {
					t.Track = d.intern(raw)
				}
			case c == '-' || (c >= '0' && c <= '9'):
				n, tok, ok := p.integer(func() string { return trackField(i, ".id") })
				if !ok {
					return
				}
				if string(tok) == "-0" {
					tok = tok[1:]
				}
				_ = n
				t.Track = d.intern(tok)
			default:
				p.fail(Shape, at, trackField(i, ".id"), "want a string or an integer")
				return
			}
		case "mean":
			haveMean = true
			var ok bool
			d.scratch, ok = p.floats(d.scratch[:0], func(j int) string {
				if j < 0 {
					return trackField(i, ".mean")
				}
				return trackField(i, ".mean["+strconv.Itoa(j)+"]")
			})
			if !ok {
				return
			}
			t.Mean = d.alloc(d.scratch)
		case "cov":
			if p.isNull() {
				break
			}
			if p.peek() != '[' {
				p.fail(Shape, p.i, trackField(i, ".cov"), "want an array of rows")
				return
			}
			p.i++
			d.scratch = d.scratch[:0]
			rows, cols := 0, 0
			f2 := true
			for r := 0; p.more(']', &f2); r++ {
				at := p.i
				before := len(d.scratch)
				var ok bool
				d.scratch, ok = p.floats(d.scratch, func(j int) string {
					if j < 0 {
						return trackField(i, ".cov["+strconv.Itoa(r)+"]")
					}
					return trackField(i, ".cov["+strconv.Itoa(r)+"]["+strconv.Itoa(j)+"]")
				})
				if !ok {
					return
				}
				n := len(d.scratch) - before
				if r == 0 {
					cols = n
				} else if n != cols {
					p.fail(Shape, at, trackField(i, ".cov["+strconv.Itoa(r)+"]"),
						"row of length "+strconv.Itoa(n)+", want "+strconv.Itoa(cols)+" like row 0")
					return
				}
				rows++
			}
			if p.err != nil {
				return
			}
			if rows > 0 {
				t.Cov = mot.Mat{Rows: rows, Cols: cols, Data: d.alloc(d.scratch)}
			}
		case "detection":
			t.HasDetection = true
			if p.isNull() {
				t.Detection = mot.NoDetection
				break
			}
			at := p.i
			if c := p.peek(); c != '-' && (c < '0' || c > '9') {
				p.fail(Shape, at, trackField(i, ".detection"), "want an integer or null")
				return
			}
			n, _, ok := p.integer(func() string { return trackField(i, ".detection") })
			if !ok {
				return
			}
			if n < 0 || n > 1<<53 {
				p.fail(Shape, at, trackField(i, ".detection"), "want a non-negative detection id or null")
				return
			}
			t.Detection = int(n)
		default:
			if !p.skip(0) {
				return
			}
		}
		if p.err != nil {
			return
		}
	}
	if p.err != nil {
		return
	}
	if !haveID {
		p.fail(Shape, p.i, trackField(i, ".id"), "missing")
		return
	}
	if !haveMean {
		p.fail(Shape, p.i, trackField(i, ".mean"), "missing")
		return
	}
	f.Tracks = append(f.Tracks, t)
}

// Wire forms of the start message's parts, decoded with encoding/json: a
// start message comes once per run, so its speed does not matter.
type wireRun struct {
	Scenario string  `json:"scenario"`
	Hash     string  `json:"scenario_hash"`
	Index    *int    `json:"index"`
	Seed     *uint64 `json:"seed"`
	Steps    *int    `json:"steps"`
}

type wireModel struct {
	StateDim       *int        `json:"state_dim"`
	MeasDim        *int        `json:"meas_dim"`
	Interval       *float64    `json:"interval"`
	F              [][]float64 `json:"F"`
	Q              [][]float64 `json:"Q"`
	H              [][]float64 `json:"H"`
	R              [][]float64 `json:"R"`
	PD             *float64    `json:"detect_prob"`
	ClutterMean    float64     `json:"clutter_mean"`
	ClutterDensity float64     `json:"clutter_density"`
	ClutterMin     []float64   `json:"clutter_min"`
	ClutterMax     []float64   `json:"clutter_max"`
	GateProb       float64     `json:"gate_prob"`
}

type wireObject struct {
	ID        string      `json:"id"`
	Mean      []float64   `json:"mean"`
	Cov       [][]float64 `json:"cov"`
	Appear    int         `json:"appear"`
	Disappear *int        `json:"disappear"`
}

func parseRequest(p *parser, line []byte) (Request, *Error) {
	var r Request
	t, e := messageType(p, line)
	if e != nil {
		return r, e
	}
	r.Type = t
	switch t {
	case TypeStop:
		p.skip(0)
		p.end()
		return r, p.finish()
	case TypeScan:
		return r, parseScan(p, &r.Scan)
	case TypeStart:
		return r, parseStart(p, &r.Start)
	}
	if p.skip(0) && p.end() {
		return r, &Error{Kind: Shape, Col: 1, Field: "type", Msg: "unknown message type " + strconv.Quote(t)}
	}
	return r, p.err
}

func parseScan(p *parser, s *mot.Scan) *Error {
	p.expect('{')
	first := true
	var haveStep, haveTime, haveDet bool
	for p.more('}', &first) {
		k, ok := p.key()
		if !ok {
			break
		}
		switch string(k) {
		case "step":
			n, _, ok := p.integer(func() string { return "step" })
			s.Step, haveStep = int(n), ok
		case "time":
			if c := p.peek(); c == '"' || c == '[' || c == '{' {
				p.fail(Shape, p.i, "time", "want a number")
				break
			}
			s.Time, haveTime = p.float(func() string { return "time" })
		case "detections":
			haveDet = true
			if p.peek() != '[' {
				p.fail(Shape, p.i, "detections", "want an array")
				break
			}
			p.i++
			f2 := true
			for i := 0; p.more(']', &f2); i++ {
				field := func(rest string) string { return "detections[" + strconv.Itoa(i) + "]" + rest }
				if !p.expect('{') {
					break
				}
				var det mot.Detection
				var haveID, haveZ bool
				f3 := true
				for p.more('}', &f3) {
					k2, ok := p.key()
					if !ok {
						break
					}
					switch string(k2) {
					case "id":
						n, _, ok := p.integer(func() string { return field(".id") })
						det.ID, haveID = int(n), ok
					case "z":
						det.Z, haveZ = p.floats(nil, func(j int) string {
							if j < 0 {
								return field(".z")
							}
							return field(".z[" + strconv.Itoa(j) + "]")
						})
					default:
						p.skip(0)
					}
					if p.err != nil {
						break
					}
				}
				if p.err == nil && !haveID {
					p.fail(Shape, p.i, field(".id"), "missing")
				}
				if p.err == nil && !haveZ {
					p.fail(Shape, p.i, field(".z"), "missing")
				}
				if p.err != nil {
					break
				}
				s.Detections = append(s.Detections, det)
			}
		default:
			p.skip(0)
		}
		if p.err != nil {
			break
		}
	}
	p.end()
	if e := p.finish(); e != nil {
		return e
	}
	switch {
	case !haveStep:
		return missing("step")
	case !haveTime:
		return missing("time")
	case !haveDet:
		return missing("detections")
	}
	return nil
}

func parseStart(p *parser, s *Start) *Error {
	// Check the syntax and non-finite numbers with the parser first, then
	// decode the parts with encoding/json.
	if !p.skip(0) || !p.end() {
		return p.err
	}
	if e := p.finish(); e != nil {
		return e
	}
	var w struct {
		Protocol *int            `json:"protocol"`
		Run      *wireRun        `json:"run"`
		Model    *wireModel      `json:"model"`
		Objects  json.RawMessage `json:"objects"`
	}
	if err := json.Unmarshal(p.b, &w); err != nil {
		return shapeError(err)
	}
	switch {
	case w.Protocol == nil:
		return missing("protocol")
	case w.Run == nil:
		return missing("run")
	case w.Model == nil:
		return missing("model")
	case w.Objects == nil:
		return missing("objects")
	}
	if *w.Protocol != Version {
		return &Error{Kind: Shape, Col: 1, Field: "protocol", Msg: fmt.Sprintf("version %d, want %d", *w.Protocol, Version)}
	}
	run := w.Run
	switch {
	case run.Index == nil:
		return missing("run.index")
	case run.Seed == nil:
		return missing("run.seed")
	case run.Steps == nil:
		return missing("run.steps")
	}
	s.Run = RunInfo{Scenario: run.Scenario, Hash: run.Hash, Index: *run.Index, Seed: *run.Seed, Steps: *run.Steps}
	m := w.Model
	switch {
	case m.StateDim == nil:
		return missing("model.state_dim")
	case m.MeasDim == nil:
		return missing("model.meas_dim")
	case m.Interval == nil:
		return missing("model.interval")
	case m.PD == nil:
		return missing("model.detect_prob")
	}
	s.Model = mot.Model{StateDim: *m.StateDim, MeasDim: *m.MeasDim, Interval: *m.Interval,
		PD: *m.PD, ClutterMean: m.ClutterMean, ClutterDensity: m.ClutterDensity,
		ClutterMin: m.ClutterMin, ClutterMax: m.ClutterMax, GateProb: m.GateProb}
	for _, x := range []struct {
		name string
		rows [][]float64
		dst  *mot.Mat
	}{{"F", m.F, &s.Model.F}, {"Q", m.Q, &s.Model.Q}, {"H", m.H, &s.Model.H}, {"R", m.R, &s.Model.R}} {
		if x.rows == nil {
			return missing("model." + x.name)
		}
		mm, ok := mot.MatFromRows(x.rows)
		if !ok {
			return &Error{Kind: Shape, Col: 1, Field: "model." + x.name, Msg: "ragged rows"}
		}
		*x.dst = mm
	}
	var objs []wireObject
	if err := json.Unmarshal(w.Objects, &objs); err != nil {
		return shapeError(err)
	}
	for i, o := range objs {
		cov, ok := mot.MatFromRows(o.Cov)
		if !ok {
			return &Error{Kind: Shape, Col: 1, Field: "objects[" + strconv.Itoa(i) + "].cov", Msg: "ragged rows"}
		}
		obj := mot.Object{ID: o.ID, Mean: o.Mean, Cov: cov, Appear: o.Appear, Disappear: -1}
		if o.Disappear != nil {
			obj.Disappear = *o.Disappear
		}
		s.Objects = append(s.Objects, obj)
	}
	return nil
}

func shapeError(err error) *Error {
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return &Error{Kind: Shape, Col: int(te.Offset), Field: te.Field, Msg: "want " + te.Type.String() + ", got " + te.Value}
	}
	return &Error{Kind: Shape, Col: 1, Msg: err.Error()}
}
