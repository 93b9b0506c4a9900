package protocol

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
)

// harbourStart is an invented two-vessel harbour approach in 2-D constant
// velocity, state [x, vx, y, vy].
func harbourStart() Start {
	f, _ := mot.MatFromRows([][]float64{{1, 2, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 2}, {0, 0, 0, 1}})
	// Q is symmetric positive definite: its 2×2 blocks have determinant
	// 0.2·0.125 − 0.15² = 0.0025 > 0 (Sylvester's criterion, common practice).
	q, _ := mot.MatFromRows([][]float64{{0.2, 0.15, 0, 0}, {0.15, 0.125, 0, 0}, {0, 0, 0.2, 0.15}, {0, 0, 0.15, 0.125}})
	h, _ := mot.MatFromRows([][]float64{{1, 0, 0, 0}, {0, 0, 1, 0}})
	r, _ := mot.MatFromRows([][]float64{{16, 0}, {0, 16}})
	return Start{
		Run: RunInfo{Scenario: "harbour-approach", Hash: "9f2c", Index: 3, Seed: 18446744073709551615, Steps: 40},
		Model: mot.Model{StateDim: 4, MeasDim: 2, Interval: 2, F: f, Q: q, H: h, R: r, PD: 0.92,
			ClutterMean: 1.5, ClutterDensity: 1.5 / 4e6, ClutterMin: []float64{-1000, -1000}, ClutterMax: []float64{1000, 1000}, GateProb: 0.995},
		Objects: []mot.Object{
			{ID: "tug", Mean: []float64{-800, 4, 120, 0}, Cov: mot.Identity(4), Appear: 0, Disappear: -1},
			{ID: "pilot \"boat\"", Mean: []float64{300, -3.5, -650, 2.25}, Cov: mot.Identity(4), Appear: 5, Disappear: 30},
		},
	}
}

func TestStartRoundTrip(t *testing.T) {
	want := harbourStart()
	b, err := AppendStart(nil, want)
	if err != nil {
		t.Fatal(err)
	}
	got, err := ParseRequest(b)
	if err != nil {
		t.Fatalf("ParseRequest(%s) error %v", b, err)
	}
	if got.Type != TypeStart {
		t.Fatalf("type %q, want start", got.Type)
	}
	if diff := cmp.Diff(want, got.Start); diff != "" {
		t.Errorf("start round trip (-want +got):\n%s", diff)
	}
}

func TestScanRoundTrip(t *testing.T) {
	for _, s := range []mot.Scan{
		{Step: 0, Time: 0, Detections: nil},
		{Step: 7, Time: 14.000000000000002, Detections: []mot.Detection{{ID: 11, Z: []float64{0.1, -2e-300}}, {ID: 12, Z: []float64{1e21, math.MaxFloat64}}}},
	} {
		b, err := AppendScan(nil, s)
		if err != nil {
			t.Fatal(err)
		}
		got, err := ParseRequest(b)
		if err != nil {
			t.Fatalf("ParseRequest(%s) error %v", b, err)
		}
		if diff := cmp.Diff(s, got.Scan); diff != "" {
			t.Errorf("scan round trip of %s (-want +got):\n%s", b, diff)
		}
	}
}

func TestEncoderRefusesNonFinite(t *testing.T) {
	_, err := AppendScan(nil, mot.Scan{Detections: []mot.Detection{{ID: 1, Z: []float64{1, math.NaN()}}}})
	var nf *NonFiniteError
	if !errors.As(err, &nf) || nf.Field != "detections[0].z[1]" {
		t.Errorf("AppendScan with NaN: error %v, want NonFiniteError at detections[0].z[1]", err)
	}
	s := harbourStart()
	s.Model.R.Data[3] = math.Inf(1)
	_, err = AppendStart(nil, s)
	if !errors.As(err, &nf) || nf.Field != "model.R[1][1]" {
		t.Errorf("AppendStart with Inf: error %v, want NonFiniteError at model.R[1][1]", err)
	}
}

func TestEncoderRefusesBadMatrix(t *testing.T) {
	s := harbourStart()
	s.Model.F.Data = s.Model.F.Data[:15]
	_, err := AppendStart(nil, s)
	var se *ShapeError
	if !errors.As(err, &se) || se.Field != "model.F" {
		t.Errorf("AppendStart with a short F: error %v, want ShapeError at model.F", err)
	}
}

func TestTracksRoundTrip(t *testing.T) {
	cov, _ := mot.MatFromRows([][]float64{{2, 0.5}, {0.5, 3}})
	want := mot.Frame{Step: 4, Tracks: []mot.Estimate{
		{Track: "a", Mean: []float64{1.5, -0.25}, Cov: cov, Detection: 3, HasDetection: true},
		{Track: "b\n", Mean: []float64{0.1, 0.2}, Detection: mot.NoDetection, HasDetection: true},
		{Track: "c", Mean: []float64{5e-324, 1e308}, Detection: mot.NoDetection},
	}}
	b, err := AppendTracks(nil, want)
	if err != nil {
		t.Fatal(err)
	}
	got, err := ParseTracks(b)
	if err != nil {
		t.Fatalf("ParseTracks(%s) error %v", b, err)
	}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("tracks round trip (-want +got):\n%s", diff)
	}
}

func TestReadyRoundTrip(t *testing.T) {
	want := Ready{Protocol: 1, Name: "harbour-nn", Version: "0.3.1", Covariance: true, ManyRuns: true}
	got, err := ParseReady(AppendReady(nil, want))
	if err != nil {
		t.Fatal(err)
	}
	if got != want {
		t.Errorf("ready round trip = %+v, want %+v", got, want)
	}
}

// TestParseTracks decodes hand-written lines, including the forms Python's
// json module writes (NaN, Infinity, integers for ids).
func TestParseTracks(t *testing.T) {
	tests := []struct {
		name   string
		line   string
		want   mot.Frame
		kind   Kind
		field  string
		col    int
		reason string
	}{
		{name: "integer id", line: `{"type":"tracks","step":2,"tracks":[{"id":17,"mean":[1,2]}]}`,
			want: mot.Frame{Step: 2, Tracks: []mot.Estimate{{Track: "17", Mean: []float64{1, 2}, Detection: -1}}}},
		{name: "negative zero id", line: `{"type":"tracks","step":0,"tracks":[{"id":-0,"mean":[1]}]}`,
			want:   mot.Frame{Tracks: []mot.Estimate{{Track: "0", Mean: []float64{1}, Detection: -1}}},
			reason: "-0 and 0 name the same integer"},
		{name: "extra fields kept out", line: ` {"extra":{"a":[1,NaN,"x"]},"type":"tracks","step":1,"tracks":[{"score":0.9,"id":"t","mean":[3],"detection":null}]} `,
			want:   mot.Frame{Step: 1, Tracks: []mot.Estimate{{Track: "t", Mean: []float64{3}, Detection: -1, HasDetection: true}}},
			reason: "unknown fields are ignored even when they hold NaN"},
		{name: "escaped id", line: `{"type":"tracks","step":1,"tracks":[{"id":"\u00e9\"","mean":[3]}]}`,
			want: mot.Frame{Step: 1, Tracks: []mot.Estimate{{Track: "é\"", Mean: []float64{3}, Detection: -1}}}},
		{name: "NaN", line: `{"type":"tracks","step":1,"tracks":[{"id":"t","mean":[3, NaN]}]}`,
			kind: NonFinite, field: "tracks[0].mean[1]", col: 58},
		{name: "Infinity in cov", line: `{"type":"tracks","step":1,"tracks":[{"id":"t","mean":[3],"cov":[[-Infinity]]}]}`,
			kind: NonFinite, field: "tracks[0].cov[0][0]"},
		{name: "overflow", line: `{"type":"tracks","step":1,"tracks":[{"id":"t","mean":[1e999]}]}`,
			kind: NonFinite, field: "tracks[0].mean[0]", reason: "1e999 is valid JSON but not a float64"},
		{name: "syntax beats NaN", line: `{"type":"tracks","step":1,"tracks":[{"id":"t","mean":[NaN]}]`,
			kind: Syntax},
		{name: "not JSON", line: `step 1: 2 tracks`, kind: Syntax, col: 1},
		{name: "trailing data", line: `{"type":"tracks","step":1,"tracks":[]} x`, kind: Syntax, col: 40},
		{name: "wrong type", line: `{"type":"ready","step":1,"tracks":[]}`, kind: Shape, field: "type"},
		{name: "missing step", line: `{"type":"tracks","tracks":[]}`, kind: Shape, field: "step"},
		{name: "fractional step", line: `{"type":"tracks","step":1.5,"tracks":[]}`, kind: Shape, field: "step"},
		{name: "string mean", line: `{"type":"tracks","step":1,"tracks":[{"id":"t","mean":["3"]}]}`, kind: Shape, field: "tracks[0].mean[0]"},
		{name: "ragged cov", line: `{"type":"tracks","step":1,"tracks":[{"id":"t","mean":[3,4],"cov":[[1,0],[0]]}]}`, kind: Shape, field: "tracks[0].cov[1]"},
		{name: "float id", line: `{"type":"tracks","step":1,"tracks":[{"id":1.5,"mean":[3]}]}`, kind: Shape, field: "tracks[0].id"},
		{name: "negative detection", line: `{"type":"tracks","step":1,"tracks":[{"id":1,"mean":[3],"detection":-1}]}`, kind: Shape, field: "tracks[0].detection"},
		{name: "missing mean", line: `{"type":"tracks","step":1,"tracks":[{"id":1}]}`, kind: Shape, field: "tracks[0].mean"},
		{name: "bad escape", line: `{"type":"tracks","step":1,"tracks":[{"id":"\q","mean":[1]}]}`, kind: Syntax},
		// Invalid UTF-8 and unpaired surrogates would both decode to
		// U+FFFD and make distinct ids equal (RFC 8259, sections 7 and 8.1).
		{name: "invalid UTF-8 id", line: "{\"type\":\"tracks\",\"step\":1,\"tracks\":[{\"id\":\"ab\xff\",\"mean\":[1]}]}",
			kind: Syntax, field: "tracks[0].id", col: 46},
		{name: "truncated UTF-8 id", line: "{\"type\":\"tracks\",\"step\":1,\"tracks\":[{\"id\":\"a\",\"mean\":[1]},{\"id\":\"\xc3\",\"mean\":[1]}]}",
			kind: Syntax, field: "tracks[1].id"},
		{name: "lone high surrogate", line: `{"type":"tracks","step":1,"tracks":[{"id":"x\ud800y","mean":[1]}]}`,
			kind: Syntax, field: "tracks[0].id", col: 45},
		{name: "lone low surrogate", line: `{"type":"tracks","step":1,"tracks":[{"id":"\udc00","mean":[1]}]}`,
			kind: Syntax, field: "tracks[0].id"},
		{name: "surrogate pair", line: `{"type":"tracks","step":1,"tracks":[{"id":"\ud83d\udea2","mean":[1]}]}`,
			want: mot.Frame{Step: 1, Tracks: []mot.Estimate{{Track: "\U0001F6A2", Mean: []float64{1}, Detection: -1}}}},
		{name: "valid UTF-8 id", line: `{"type":"tracks","step":1,"tracks":[{"id":"Fähre","mean":[1]}]}`,
			want: mot.Frame{Step: 1, Tracks: []mot.Estimate{{Track: "Fähre", Mean: []float64{1}, Detection: -1}}}},
		{name: "invalid UTF-8 in an extra field", line: "{\"type\":\"tracks\",\"note\":\"\xfe\",\"step\":1,\"tracks\":[]}",
			kind: Syntax, col: 26},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := ParseTracks([]byte(tt.line))
			if tt.kind == 0 {
				if err != nil {
					t.Fatalf("ParseTracks(%s) error %v", tt.line, err)
				}
				if diff := cmp.Diff(tt.want, got); diff != "" {
					t.Errorf("ParseTracks(%s) (-want +got):\n%s", tt.line, diff)
				}
				return
			}
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("ParseTracks(%s) error %v, want *Error of kind %v", tt.line, err, tt.kind)
			}
			if e.Kind != tt.kind || (tt.field != "" && e.Field != tt.field) || (tt.col != 0 && e.Col != tt.col) {
				t.Errorf("ParseTracks(%s) = %v (kind %v, field %q, col %d), want kind %v field %q col %d",
					tt.line, e, e.Kind, e.Field, e.Col, tt.kind, tt.field, tt.col)
			}
		})
	}
}

func TestDecoderLines(t *testing.T) {
	in := `{"type":"ready","protocol":1,"tracker":"x","version":"1"}` + "\r\n" +
		`{"type":"tracks","step":0,"tracks":[]}` + "\n" +
		strings.Repeat("x", 300) + "\n" +
		`{"type":"tracks","step":1,"tracks":[{"id":1,"mean":[NaN]}]}`
	d := NewDecoder(strings.NewReader(in), "tracker stdout", 200)
	if _, err := d.ReadReady(); err != nil {
		t.Fatal(err)
	}
	var f mot.Frame
	if err := d.ReadTracks(&f); err != nil || d.Line() != 2 {
		t.Fatalf("line 2: %v (line %d)", err, d.Line())
	}
	err := d.ReadTracks(&f)
	var e *Error
	if !errors.As(err, &e) || e.Kind != TooLong || e.Line != 3 {
		t.Fatalf("line 3: error %v, want TooLong at line 3", err)
	}
	err = d.ReadTracks(&f)
	if !errors.As(err, &e) || e.Kind != NonFinite || e.Line != 4 || e.Error() != "tracker stdout:4:53: tracks[0].mean[0]: non-finite number NaN" {
		t.Fatalf("line 4: error %v, want the NaN at tracker stdout:4:53", err)
	}
	if _, err := d.ReadLine(); err == nil {
		t.Fatal("want io.EOF after the last line")
	}
}

func TestEncoderWritesLines(t *testing.T) {
	var buf bytes.Buffer
	e := NewEncoder(&buf)
	if err := e.Scan(mot.Scan{Step: 1, Time: 0.5, Detections: []mot.Detection{{ID: 4, Z: []float64{1, 2}}}}); err != nil {
		t.Fatal(err)
	}
	if err := e.Stop(); err != nil {
		t.Fatal(err)
	}
	want := `{"type":"scan","step":1,"time":0.5,"detections":[{"id":4,"z":[1,2]}]}` + "\n" + `{"type":"stop"}` + "\n"
	if buf.String() != want {
		t.Errorf("encoder wrote %q, want %q", buf.String(), want)
	}
}

// FuzzParseTracks checks that no input panics the tracks decoder and that
// whatever it accepts survives an encode/decode round trip unchanged.
func FuzzParseTracks(f *testing.F) {
	for _, s := range []string{
		`{"type":"tracks","step":0,"tracks":[]}`,
		`{"type":"tracks","step":3,"tracks":[{"id":"a","mean":[1,2],"cov":[[1,0],[0,1]],"detection":4}]}`,
		`{"type":"tracks","step":3,"tracks":[{"id":7,"mean":[NaN,-Infinity],"detection":null}]}`,
		`{"type":"tracks","step":1,"x":{"y":[true,false,null,"\u0041"]},"tracks":[{"id":"\n","mean":[1e999]}]}`,
		`[1,2`, `{"type":"ready"}`, ``,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, line []byte) {
		fr, err := ParseTracks(line)
		if err != nil {
			var e *Error
			if !errors.As(err, &e) {
				t.Fatalf("error %v is not an *Error", err)
			}
			return
		}
		b, err := AppendTracks(nil, fr)
		if err != nil {
			t.Fatalf("re-encoding accepted frame: %v", err)
		}
		again, err := ParseTracks(b)
		if err != nil {
			t.Fatalf("decoding re-encoded %s: %v", b, err)
		}
		if diff := cmp.Diff(fr, again); diff != "" {
			t.Fatalf("round trip changed the frame (-first +second):\n%s", diff)
		}
	})
}

// FuzzParseRequest checks the harness-message decoder and Start.Validate
// never panic, that a validated start encodes again, and that accepted
// scans round-trip.
func FuzzParseRequest(f *testing.F) {
	b, _ := AppendStart(nil, harbourStart())
	f.Add(b)
	f.Add([]byte(`{"type":"scan","step":1,"time":2,"detections":[{"id":0,"z":[1,2]}]}`))
	f.Add([]byte(`{"type":"stop"}`))
	f.Fuzz(func(t *testing.T, line []byte) {
		r, err := ParseRequest(line)
		if err == nil && r.Type == TypeStart && r.Start.Validate() == nil {
			// A start that passes Validate has the shapes the encoder
			// needs, so it must encode again.
			if _, err := AppendStart(nil, r.Start); err != nil {
				t.Fatalf("re-encoding a validated start: %v", err)
			}
		}
		if err != nil || r.Type != TypeScan {
			return
		}
		b, err := AppendScan(nil, r.Scan)
		if err != nil {
			t.Fatalf("re-encoding accepted scan: %v", err)
		}
		again, err := ParseRequest(b)
		if err != nil {
			t.Fatalf("decoding re-encoded %s: %v", b, err)
		}
		if diff := cmp.Diff(r.Scan, again.Scan); diff != "" {
			t.Fatalf("round trip changed the scan (-first +second):\n%s", diff)
		}
	})
}

func benchFrame() mot.Frame {
	f := mot.Frame{Step: 12}
	for i := 0; i < 5; i++ {
		cov := mot.Identity(4)
		f.Tracks = append(f.Tracks, mot.Estimate{Track: string(rune('a' + i)), Mean: []float64{-812.3456789012, 4.123456789, 120.98765432, -0.0123456789},
			Cov: cov, Detection: i, HasDetection: true})
	}
	return f
}

func BenchmarkReadTracks(b *testing.B) {
	line, _ := AppendTracks(nil, benchFrame())
	line = append(line, '\n')
	r := bytes.NewReader(line)
	d := NewDecoder(r, "bench", 0)
	var f mot.Frame
	b.ReportAllocs()
	b.SetBytes(int64(len(line)))
	for b.Loop() {
		r.Reset(line)
		if err := d.ReadTracks(&f); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkAppendScan(b *testing.B) {
	s := mot.Scan{Step: 12, Time: 24}
	for i := 0; i < 8; i++ {
		s.Detections = append(s.Detections, mot.Detection{ID: 100 + i, Z: []float64{-812.3456789012 + float64(i), 120.98765432}})
	}
	buf := make([]byte, 0, 4096)
	b.ReportAllocs()
	for b.Loop() {
		buf, _ = AppendScan(buf[:0], s)
	}
}

// FuzzParseReady checks that no input panics the ready decoder and that
// accepted replies round-trip.
func FuzzParseReady(f *testing.F) {
	f.Add([]byte(`{"type":"ready","protocol":1,"tracker":"x","version":"1","reports":{"covariance":true,"detection":false},"many_runs":true}`))
	f.Add([]byte(`{"type":"ready","protocol":2,"tracker":""}`))
	f.Add([]byte(`{"tracker":"\u0000","type":"ready","protocol":1,"reports":{"x":[NaN]}}`))
	f.Fuzz(func(t *testing.T, line []byte) {
		r, err := ParseReady(line)
		if err != nil {
			return
		}
		again, err := ParseReady(AppendReady(nil, r))
		if err != nil || again != r {
			t.Fatalf("round trip of %+v gave %+v, %v", r, again, err)
		}
	})
}

// TestTooLongSmallCap covers caps below the excerpt size and lines longer
// than the reader's buffer.
func TestTooLongSmallCap(t *testing.T) {
	for _, tt := range []struct {
		max, n int
	}{{10, 20}, {100, 200 << 10}, {1 << 20, 3 << 20}} {
		d := NewDecoder(strings.NewReader(strings.Repeat("y", tt.n)+"\n{}\n"), "s", tt.max)
		_, err := d.ReadLine()
		var e *Error
		if !errors.As(err, &e) || e.Kind != TooLong || e.Line != 1 {
			t.Errorf("cap %d, line of %d: error %v, want TooLong at line 1", tt.max, tt.n, err)
		}
		if len(d.Raw()) > 256 || len(d.Raw()) == 0 {
			t.Errorf("cap %d: excerpt of %d bytes, want 1 to 256", tt.max, len(d.Raw()))
		}
	}
}

// BenchmarkReadTracksEncodingJSON decodes the same line as
// BenchmarkReadTracks with encoding/json into an equivalent struct, as a
// yardstick for the hand-written decoder (without its checks for
// non-finite tokens and field paths).
func BenchmarkReadTracksEncodingJSON(b *testing.B) {
	line, _ := AppendTracks(nil, benchFrame())
	type track struct {
		ID        json.RawMessage `json:"id"`
		Mean      []float64       `json:"mean"`
		Cov       [][]float64     `json:"cov"`
		Detection *int            `json:"detection"`
	}
	var msg struct {
		Type   string  `json:"type"`
		Step   int     `json:"step"`
		Tracks []track `json:"tracks"`
	}
	b.ReportAllocs()
	b.SetBytes(int64(len(line)))
	for b.Loop() {
		msg.Tracks = msg.Tracks[:0]
		if err := json.Unmarshal(line, &msg); err != nil {
			b.Fatal(err)
		}
	}
}
