package protocol

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"unicode/utf8"

	"trackgate/harness/mot"
)

// NonFiniteError is returned by the encoder for a NaN or infinite value,
// which JSON cannot carry.
type NonFiniteError struct {
	Field string
	Value float64
}

func (e *NonFiniteError) Error() string {
	return fmt.Sprintf("protocol: %s: cannot encode non-finite number %v", e.Field, e.Value)
}

// Encoder writes messages, one line each, to a writer. It reuses one buffer,
// so steady-state encoding does not allocate. An Encoder is not safe for
// concurrent use.
type Encoder struct {
	w   io.Writer
	buf []byte
}

// NewEncoder returns an Encoder writing to w. Each message is handed to w in
// a single Write call that ends with '\n'.
func NewEncoder(w io.Writer) *Encoder { return &Encoder{w: w, buf: make([]byte, 0, 4096)} }

// Last returns the bytes of the last message written, without the newline.
// They stay valid until the next call.
func (e *Encoder) Last() []byte {
	if len(e.buf) == 0 {
		return nil
	}
	return e.buf[:len(e.buf)-1]
}

func (e *Encoder) write(b []byte, err error) error {
	if err != nil {
		e.buf = e.buf[:0]
		return err
	}
	e.buf = append(b, '\n')
	_, err = e.w.Write(e.buf)
	return err
}

// Start writes a start message.
func (e *Encoder) Start(s Start) error { return e.write(AppendStart(e.buf[:0], s)) }

// Scan writes a scan message.
func (e *Encoder) Scan(s mot.Scan) error { return e.write(AppendScan(e.buf[:0], s)) }

// Stop writes a stop message.
func (e *Encoder) Stop() error { return e.write(AppendStop(e.buf[:0]), nil) }

// Ready writes a ready message.
func (e *Encoder) Ready(r Ready) error { return e.write(AppendReady(e.buf[:0], r), nil) }

// Tracks writes a tracks message for frame f. Covariances are written for
// tracks whose Cov is not empty; the detection field is written for tracks
// with HasDetection (null for mot.NoDetection).
func (e *Encoder) Tracks(f mot.Frame) error { return e.write(AppendTracks(e.buf[:0], f)) }

// AppendStart appends the start message for s, without a newline.
func AppendStart(b []byte, s Start) ([]byte, error) {
	m := s.Model
	b = append(b, `{"type":"start","protocol":`...)
	b = strconv.AppendInt(b, Version, 10)
	b = append(b, `,"run":{"scenario":`...)
	b = appendString(b, s.Run.Scenario)
	b = append(b, `,"scenario_hash":`...)
	b = appendString(b, s.Run.Hash)
	b = append(b, `,"index":`...)
	b = strconv.AppendInt(b, int64(s.Run.Index), 10)
	b = append(b, `,"seed":`...)
	b = strconv.AppendUint(b, s.Run.Seed, 10)
	b = append(b, `,"steps":`...)
	b = strconv.AppendInt(b, int64(s.Run.Steps), 10)
	b = append(b, `},"model":{"state_dim":`...)
	b = strconv.AppendInt(b, int64(m.StateDim), 10)
	b = append(b, `,"meas_dim":`...)
	b = strconv.AppendInt(b, int64(m.MeasDim), 10)
	var err error
	num := func(name string, v float64) {
		if err != nil {
			return
		}
		b = append(b, `,"`...)
		b = append(b, name...)
		b = append(b, `":`...)
		b, err = appendFloat(b, v, "model."+name)
	}
	mat := func(name string, v mot.Mat) {
		if err != nil {
			return
		}
		b = append(b, `,"`...)
		b = append(b, name...)
		b = append(b, `":`...)
		b, err = appendMat(b, v, "model."+name)
	}
	vec := func(name string, v []float64) {
		if err != nil {
			return
		}
		b = append(b, `,"`...)
		b = append(b, name...)
		b = append(b, `":`...)
		b, err = appendVec(b, v, "model."+name)
	}
	num("interval", m.Interval)
	mat("F", m.F)
	mat("Q", m.Q)
	mat("H", m.H)
	mat("R", m.R)
	num("detect_prob", m.PD)
	num("clutter_mean", m.ClutterMean)
	num("clutter_density", m.ClutterDensity)
	vec("clutter_min", m.ClutterMin)
	vec("clutter_max", m.ClutterMax)
	num("gate_prob", m.GateProb)
	if err != nil {
		return b, err
	}
	b = append(b, `},"objects":[`...)
	for i, o := range s.Objects {
		if i > 0 {
			b = append(b, ',')
		}
		field := "objects[" + strconv.Itoa(i) + "]"
		b = append(b, `{"id":`...)
		b = appendString(b, o.ID)
		b = append(b, `,"mean":`...)
		if b, err = appendVec(b, o.Mean, field+".mean"); err != nil {
			return b, err
		}
		b = append(b, `,"cov":`...)
		if b, err = appendMat(b, o.Cov, field+".cov"); err != nil {
			return b, err
		}
		b = append(b, `,"appear":`...)
		b = strconv.AppendInt(b, int64(o.Appear), 10)
		b = append(b, `,"disappear":`...)
		if o.Disappear < 0 {
			b = append(b, "null"...)
		} else {
			b = strconv.AppendInt(b, int64(o.Disappear), 10)
		}
		b = append(b, '}')
	}
	return append(b, "]}"...), nil
}

// AppendScan appends the scan message for s, without a newline.
func AppendScan(b []byte, s mot.Scan) ([]byte, error) {
	b = append(b, `{"type":"scan","step":`...)
	b = strconv.AppendInt(b, int64(s.Step), 10)
	b = append(b, `,"time":`...)
	var err error
	if b, err = appendFloat(b, s.Time, "time"); err != nil {
		return b, err
	}
	b = append(b, `,"detections":[`...)
	for i, d := range s.Detections {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"id":`...)
		b = strconv.AppendInt(b, int64(d.ID), 10)
		b = append(b, `,"z":`...)
		for j, v := range d.Z {
			if j == 0 {
				b = append(b, '[')
			} else {
				b = append(b, ',')
			}
			if !isFinite(v) {
				return b, &NonFiniteError{Field: "detections[" + strconv.Itoa(i) + "].z[" + strconv.Itoa(j) + "]", Value: v}
			}
			b = strconv.AppendFloat(b, v, 'g', -1, 64)
		}
		if len(d.Z) == 0 {
			b = append(b, '[')
		}
		b = append(b, "]}"...)
	}
	return append(b, "]}"...), nil
}

// AppendStop appends the stop message, without a newline.
func AppendStop(b []byte) []byte { return append(b, `{"type":"stop"}`...) }

// AppendReady appends the ready message for r, without a newline. A zero
// Protocol is written as Version.
func AppendReady(b []byte, r Ready) []byte {
	p := r.Protocol
	if p == 0 {
		p = Version
	}
	b = append(b, `{"type":"ready","protocol":`...)
	b = strconv.AppendInt(b, int64(p), 10)
	b = append(b, `,"tracker":`...)
	b = appendString(b, r.Name)
	b = append(b, `,"version":`...)
	b = appendString(b, r.Version)
	b = append(b, `,"reports":{"covariance":`...)
	b = strconv.AppendBool(b, r.Covariance)
	b = append(b, `,"detection":`...)
	b = strconv.AppendBool(b, r.Association)
	b = append(b, `},"many_runs":`...)
	b = strconv.AppendBool(b, r.ManyRuns)
	return append(b, '}')
}

// AppendTracks appends the tracks message for f, without a newline.
func AppendTracks(b []byte, f mot.Frame) ([]byte, error) {
	b = append(b, `{"type":"tracks","step":`...)
	b = strconv.AppendInt(b, int64(f.Step), 10)
	b = append(b, `,"tracks":[`...)
	var err error
	for i, t := range f.Tracks {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"id":`...)
		b = appendString(b, t.Track)
		b = append(b, `,"mean":`...)
		if b, err = appendVec(b, t.Mean, "tracks[].mean"); err != nil {
			return b, err
		}
		if t.Cov.Rows > 0 {
			b = append(b, `,"cov":`...)
			if b, err = appendMat(b, t.Cov, "tracks[].cov"); err != nil {
				return b, err
			}
		}
		if t.HasDetection {
			b = append(b, `,"detection":`...)
			if t.Detection < 0 {
				b = append(b, "null"...)
			} else {
				b = strconv.AppendInt(b, int64(t.Detection), 10)
			}
		}
		b = append(b, '}')
	}
	return append(b, "]}"...), nil
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// appendFloat writes v in shortest round-trip form. 'g' with precision −1
// gives the shortest decimal that parses back to v; its exponent form
// (1e+21, 5e-07) is valid JSON.
func appendFloat(b []byte, v float64, field string) ([]byte, error) {
	if !isFinite(v) {
		return b, &NonFiniteError{Field: field, Value: v}
	}
	return strconv.AppendFloat(b, v, 'g', -1, 64), nil
}

func appendVec(b []byte, v []float64, field string) ([]byte, error) {
	b = append(b, '[')
	for i, x := range v {
		if i > 0 {
			b = append(b, ',')
		}
		if !isFinite(x) {
			return b, &NonFiniteError{Field: field + "[" + strconv.Itoa(i) + "]", Value: x}
		}
		b = strconv.AppendFloat(b, x, 'g', -1, 64)
	}
	return append(b, ']'), nil
}

// ShapeError is returned by the encoder for a matrix whose data does not
// match its declared size.
type ShapeError struct {
	Field      string
	Rows, Cols int
	Len        int
}

func (e *ShapeError) Error() string {
	return fmt.Sprintf("protocol: %s: %d×%d matrix with %d entries", e.Field, e.Rows, e.Cols, e.Len)
}

func appendMat(b []byte, m mot.Mat, field string) ([]byte, error) {
	if m.Rows < 0 || m.Cols < 0 || len(m.Data) != m.Rows*m.Cols {
		return b, &ShapeError{Field: field, Rows: m.Rows, Cols: m.Cols, Len: len(m.Data)}
	}
	b = append(b, '[')
	for i := 0; i < m.Rows; i++ {
		if i > 0 {
			b = append(b, ',')
		}
		b = append(b, '[')
		for j := 0; j < m.Cols; j++ {
			if j > 0 {
				b = append(b, ',')
			}
			x := m.Data[i*m.Cols+j]
			if !isFinite(x) {
				return b, &NonFiniteError{Field: field + "[" + strconv.Itoa(i) + "][" + strconv.Itoa(j) + "]", Value: x}
			}
			b = strconv.AppendFloat(b, x, 'g', -1, 64)
		}
		b = append(b, ']')
	}
	return append(b, ']'), nil
}

const hexDigits = "0123456789abcdef"

// appendString writes s as a JSON string: quote, backslash and control
// characters escaped, invalid UTF-8 replaced by U+FFFD, everything else
// verbatim.
func appendString(b []byte, s string) []byte {
	b = append(b, '"')
	for i := 0; i < len(s); {
		c := s[i]
		if c < utf8.RuneSelf {
			switch {
			case c == '"' || c == '\\':
				b = append(b, '\\', c)
			case c == '\n':
				b = append(b, '\\', 'n')
			case c == '\t':
				b = append(b, '\\', 't')
			case c == '\r':
				b = append(b, '\\', 'r')
			case c < 0x20:
				b = append(b, '\\', 'u', '0', '0', hexDigits[c>>4], hexDigits[c&0xf])
			default:
				b = append(b, c)
			}
			i++
			continue
		}
		r, size := utf8.DecodeRuneInString(s[i:])
		if r == utf8.RuneError && size == 1 {
			b = append(b, `\ufffd`...)
		} else {
			b = append(b, s[i:i+size]...)
		}
		i += size
	}
	return append(b, '"')
}
