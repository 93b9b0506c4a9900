package protocol

import (
	"bufio"
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/santhosh-tekuri/jsonschema/v6"

	"trackgate/harness/mot"
)

// The message schemas in schema/ are checked with an independent,
// conforming draft 2020-12 validator (github.com/santhosh-tekuri/jsonschema
// v6.0.3), so the schemas are tested the way tracker authors will use them,
// not by code of our own.

var schemaTypes = []string{TypeStart, TypeScan, TypeStop, TypeReady, TypeTracks}

func compileSchemas(t *testing.T) map[string]*jsonschema.Schema {
	t.Helper()
	c := jsonschema.NewCompiler()
	c.DefaultDraft(jsonschema.Draft2020)
	out := map[string]*jsonschema.Schema{}
	for _, typ := range schemaTypes {
		path := filepath.Join("schema", typ+".json")
		f, err := os.Open(path)
		if err != nil {
			t.Fatal(err)
		}
		doc, err := jsonschema.UnmarshalJSON(f)
		f.Close()
		if err != nil {
			t.Fatalf("%s: %v", path, err)
		}
		if err := c.AddResource(path, doc); err != nil {
			t.Fatal(err)
		}
		// Compile also validates the schema against the metaschema.
		s, err := c.Compile(path)
		if err != nil {
			t.Fatalf("compile %s: %v", path, err)
		}
		out[typ] = s
	}
	return out
}

// validate checks one line against the schema its "type" names.
func validate(t *testing.T, schemas map[string]*jsonschema.Schema, line []byte) error {
	t.Helper()
	v, err := jsonschema.UnmarshalJSON(bytes.NewReader(line))
	if err != nil {
		return err
	}
	m, _ := v.(map[string]any)
	typ, _ := m["type"].(string)
	s, ok := schemas[typ]
	if !ok {
		t.Fatalf("no schema for message type %q in %s", typ, line)
	}
	return s.Validate(v)
}

// exampleExchange reads the example exchange from PROTOCOL.md: the lines
// of the fenced block after the example-exchange marker.
func exampleExchange(t *testing.T) (harness, tracker [][]byte) {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "PROTOCOL.md"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Buffer(nil, 1<<20)
	state := 0 // 0 before the marker, 1 before the fence, 2 inside, 3 done
	for sc.Scan() {
		line := sc.Text()
		switch {
		case state == 0 && strings.HasPrefix(line, "<!-- example-exchange"):
			state = 1
		case state == 1 && strings.HasPrefix(line, "```"):
			state = 2
		case state == 2 && strings.HasPrefix(line, "```"):
			state = 3
		case state == 2 && strings.HasPrefix(line, "harness> "):
			harness = append(harness, []byte(strings.TrimPrefix(line, "harness> ")))
		case state == 2 && strings.HasPrefix(line, "tracker> "):
			tracker = append(tracker, []byte(strings.TrimPrefix(line, "tracker> ")))
		case state == 2:
			t.Fatalf("PROTOCOL.md: example line %q has neither prefix", line)
		}
	}
	if state != 3 || len(harness) == 0 || len(tracker) == 0 {
		t.Fatal("PROTOCOL.md: example exchange not found")
	}
	return harness, tracker
}

// marinaRun is the run of the example exchange in PROTOCOL.md, built here
// by hand from the document's description.
func marinaRun() (Start, []mot.Scan) {
	f, _ := mot.MatFromRows([][]float64{{1, 1, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 1}, {0, 0, 0, 1}})
	q, _ := mot.MatFromRows([][]float64{{0.025, 0.05, 0, 0}, {0.05, 0.1, 0, 0}, {0, 0, 0.025, 0.05}, {0, 0, 0.05, 0.1}})
	h, _ := mot.MatFromRows([][]float64{{1, 0, 0, 0}, {0, 0, 1, 0}})
	r, _ := mot.MatFromRows([][]float64{{4, 0}, {0, 4}})
	cov, _ := mot.MatFromRows([][]float64{{25, 0, 0, 0}, {0, 1, 0, 0}, {0, 0, 25, 0}, {0, 0, 0, 1}})
	s := Start{
		Run: RunInfo{Scenario: "marina-entrance", Hash: "5d1e0c4a9b7f3e2d1c0b9a8f7e6d5c4b3a29181706f5e4d3c2b1a09f8e7d6c5b",
			Index: 0, Seed: 7301, Steps: 2},
		Model: mot.Model{StateDim: 4, MeasDim: 2, Interval: 1, F: f, Q: q, H: h, R: r, PD: 0.9,
			ClutterMean: 2, ClutterDensity: 2e-6, ClutterMin: []float64{-500, -500}, ClutterMax: []float64{500, 500}, GateProb: 0.99},
		Objects: []mot.Object{{ID: "skiff", Mean: []float64{-120, 3, 40, -1}, Cov: cov, Appear: 0, Disappear: -1}},
	}
	scans := []mot.Scan{
		{Step: 0, Time: 0, Detections: []mot.Detection{{ID: 0, Z: []float64{-118.5, 41.2}}, {ID: 1, Z: []float64{233.9, -410.7}}}},
		{Step: 1, Time: 1, Detections: []mot.Detection{{ID: 2, Z: []float64{-361, 12.4}}}},
	}
	return s, scans
}

// TestExampleExchange checks the exchange in PROTOCOL.md: every line
// validates against its schema, the harness lines are exactly what the Go
// encoder writes for the run the document describes, and the tracker lines
// decode to what the document says they mean.
func TestExampleExchange(t *testing.T) {
	schemas := compileSchemas(t)
	harness, tracker := exampleExchange(t)
	for _, line := range append(append([][]byte{}, harness...), tracker...) {
		if err := validate(t, schemas, line); err != nil {
			t.Errorf("PROTOCOL.md line %s does not match its schema: %v", line, err)
		}
	}
	start, scans := marinaRun()
	var buf bytes.Buffer
	enc := NewEncoder(&buf)
	if err := enc.Start(start); err != nil {
		t.Fatal(err)
	}
	for _, s := range scans {
		if err := enc.Scan(s); err != nil {
			t.Fatal(err)
		}
	}
	enc.Stop()
	got := bytes.Split(bytes.TrimSuffix(buf.Bytes(), []byte("\n")), []byte("\n"))
	if len(got) != len(harness) {
		t.Fatalf("encoder wrote %d lines, document shows %d", len(got), len(harness))
	}
	for i := range got {
		if !bytes.Equal(got[i], harness[i]) {
			t.Errorf("harness line %d:\ndocument: %s\nencoder:  %s", i+1, harness[i], got[i])
		}
	}

	d := NewDecoder(bytes.NewReader(bytes.Join(tracker, []byte("\n"))), "PROTOCOL.md example", 0)
	ready, err := d.ReadReady()
	if err != nil {
		t.Fatal(err)
	}
	if want := (Ready{Protocol: 1, Name: "marina-nn", Version: "0.2.0", Covariance: true, Association: true}); ready != want {
		t.Errorf("ready = %+v, want %+v", ready, want)
	}
	for k := 0; k < 2; k++ {
		var f mot.Frame
		if err := d.ReadTracks(&f); err != nil {
			t.Fatal(err)
		}
		wantDet := []int{0, mot.NoDetection}[k]
		if f.Step != k || len(f.Tracks) != 1 || f.Tracks[0].Track != "1" || f.Tracks[0].Detection != wantDet ||
			!f.Tracks[0].HasDetection || f.Tracks[0].Cov.Rows != 4 {
			t.Errorf("step %d decoded as %+v", k, f)
		}
	}
}

// TestExampleArithmetic re-derives the example's tracker numbers, so that
// the document shows a plausible filter, not invented values: a Kalman
// update of the prior N(−120, 25) in x with z = −118.5, R = 4 gives gain
// 25/29, mean −120 + 1.5·25/29 and variance 25·4/29; one constant-velocity
// prediction with the example's F and Q (q = 0.1, Δt = 1) then adds
// Pᵥᵥ + q/4 to Pₓₓ and so on. Equations: Y. Bar-Shalom, X. R. Li,
// T. Kirubarajan, Estimation with Applications to Tracking and Navigation,
// Wiley, 2001, §5.2 (from memory) and §6.3.2 for the white-noise
// acceleration Q (from memory).
func TestExampleArithmetic(t *testing.T) {
	_, tracker := exampleExchange(t)
	var msgs []struct {
		Tracks []struct {
			Mean []float64   `json:"mean"`
			Cov  [][]float64 `json:"cov"`
		} `json:"tracks"`
	}
	for _, line := range tracker[1:] {
		var m struct {
			Tracks []struct {
				Mean []float64   `json:"mean"`
				Cov  [][]float64 `json:"cov"`
			} `json:"tracks"`
		}
		if err := json.Unmarshal(line, &m); err != nil {
			t.Fatal(err)
		}
		msgs = append(msgs, m)
	}
	close := func(name string, got, want, tol float64) {
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %v in PROTOCOL.md, want %v ± %v", name, got, want, tol)
		}
	}
	gain := 25.0 / 29
	x0, y0, p0 := -120+1.5*gain, 40+1.2*gain, 25*4.0/29
	s0 := msgs[0].Tracks[0]
	close("step 0 x", s0.Mean[0], x0, 5e-4)
	close("step 0 y", s0.Mean[2], y0, 5e-4)
	close("step 0 Pxx", s0.Cov[0][0], p0, 5e-4)
	s1 := msgs[1].Tracks[0]
	close("step 1 x", s1.Mean[0], x0+3, 5e-4)
	close("step 1 y", s1.Mean[2], y0-1, 5e-4)
	// F P Fᵀ + Q with P = diag(p0, 1): Pxx = p0 + 1 + 0.025, Pxv = 1 + 0.05, Pvv = 1 + 0.1.
	close("step 1 Pxx", s1.Cov[0][0], p0+1+0.025, 5e-4)
	close("step 1 Pxv", s1.Cov[0][1], 1.05, 1e-12)
	close("step 1 Pvv", s1.Cov[1][1], 1.1, 1e-12)
}

// TestEncoderMatchesSchemas validates the Go encoder's output for each
// message type against the schemas.
func TestEncoderMatchesSchemas(t *testing.T) {
	schemas := compileSchemas(t)
	start, _ := AppendStart(nil, harbourStart())
	scan, _ := AppendScan(nil, mot.Scan{Step: 3, Time: 6, Detections: []mot.Detection{{ID: 9, Z: []float64{1e-300, -7}}}})
	empty, _ := AppendScan(nil, mot.Scan{Step: 4, Time: 8})
	tracks, _ := AppendTracks(nil, benchFrame())
	bare, _ := AppendTracks(nil, mot.Frame{Step: 0, Tracks: []mot.Estimate{{Track: "x", Mean: []float64{1}, Detection: mot.NoDetection, HasDetection: true}}})
	for _, line := range [][]byte{start, scan, empty, AppendStop(nil), AppendReady(nil, Ready{Name: "a"}), tracks, bare} {
		if err := validate(t, schemas, line); err != nil {
			t.Errorf("encoder output %s does not match its schema: %v", line, err)
		}
	}
}

// TestSchemasAgreeWithDecoder checks that the tracks schema and the
// decoder accept and reject the same lines (apart from what JSON Schema
// cannot say, such as non-finite tokens, which are not JSON).
func TestSchemasAgreeWithDecoder(t *testing.T) {
	schemas := compileSchemas(t)
	for _, tt := range []struct {
		line string
		ok   bool
	}{
		{`{"type":"tracks","step":0,"tracks":[]}`, true},
		{`{"type":"tracks","step":0,"tracks":[{"id":"a","mean":[1],"cov":null,"detection":null,"x":{}}]}`, true},
		{`{"type":"tracks","tracks":[]}`, false},
		{`{"type":"tracks","step":0}`, false},
		{`{"type":"tracks","step":0,"tracks":[{"mean":[1]}]}`, false},
		{`{"type":"tracks","step":0,"tracks":[{"id":"a"}]}`, false},
		{`{"type":"tracks","step":0,"tracks":[{"id":true,"mean":[1]}]}`, false},
		{`{"type":"tracks","step":0,"tracks":[{"id":"a","mean":["1"]}]}`, false},
		{`{"type":"tracks","step":0,"tracks":[{"id":"a","mean":[1],"detection":-2}]}`, false},
		{`{"type":"tracks","step":0,"tracks":[{"id":"a","mean":[1],"cov":[1]}]}`, false},
	} {
		_, derr := ParseTracks([]byte(tt.line))
		serr := validate(t, schemas, []byte(tt.line))
		if (derr == nil) != tt.ok || (serr == nil) != tt.ok {
			t.Errorf("%s: decoder error %v, schema error %v; want accepted = %v by both", tt.line, derr, serr, tt.ok)
		}
	}
}
