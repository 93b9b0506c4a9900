package golden

import (
	"bytes"
	"flag"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/mot"
)

var seed = flag.Uint64("seed", 1, "seed of the random tests (0: random, logged)")

// testRand returns the seeded source of a test; -seed 0 picks a seed from
// the clock. Any seed but the default is logged.
func testRand(t testing.TB) *rand.Rand {
	s := *seed
	if s == 0 {
		s = uint64(time.Now().UnixNano())
	}
	if s != 1 {
		t.Logf("seed %d (rerun with -seed %d)", s, s)
	}
	return rand.New(rand.NewPCG(s, 0x901d))
}

func header(k Kind) Header {
	return Header{Format: FormatVersion, Kind: k, Scenario: "harbour_approach", ScenarioHash: "5be1c0ffee",
		Run: 0, Seed: 81, Protocol: 1, Trackgate: "(devel)",
		Platform: Platform{Go: "go1.26.8", OS: "linux", Arch: "amd64", AMD64: "v1"}}
}

// TestKeyOrder pins the exact bytes of every record kind; the expected
// lines are written by hand from the format in golden/README.md.
func TestKeyOrder(t *testing.T) {
	cov, _ := mot.MatFromRows([][]float64{{4, 0.5}, {0.5, 1}})
	tests := []struct {
		name string
		file File
		want string
	}{
		{"tape", File{Header: header(Tape), Steps: []Step{{
			Scan:  mot.Scan{Step: 3, Time: 1.5, Detections: []mot.Detection{{ID: 12, Z: []float64{10, -2.5}}}},
			Truth: mot.Truth{Step: 3, Objects: []mot.TruthState{{Object: "tug", X: []float64{10.25, -2}}}, Origins: []mot.Origin{{Detection: 12, Object: "tug"}}},
		}}},
			`{"golden":1,"kind":"tape","scenario":"harbour_approach","scenario_sha256":"5be1c0ffee","run":0,"seed":81,"protocol":1,"trackgate":"(devel)","go":"go1.26.8","goos":"linux","goarch":"amd64","goamd64":"v1"}
{"step":3,"time":1.5,"detections":[{"id":12,"z":[10,-2.5]}],"truth":[{"object":"tug","x":[10.25,-2]}],"origins":[{"detection":12,"object":"tug"}]}
`},
		{"output", File{Header: func() Header { h := header(Output); h.Tracker = "dock-tracker"; return h }(),
			Frames: []mot.Frame{{Step: 0, Tracks: []mot.Estimate{{Track: "t1", Mean: []float64{1, 2}, Cov: cov, Detection: 4, HasDetection: true}, {Track: "t2", Mean: []float64{0.1, -0}}}}}},
			`{"golden":1,"kind":"output","scenario":"harbour_approach","scenario_sha256":"5be1c0ffee","tracker":"dock-tracker","run":0,"seed":81,"protocol":1,"trackgate":"(devel)","go":"go1.26.8","goos":"linux","goarch":"amd64","goamd64":"v1"}
{"step":0,"tracks":[{"track":"t1","mean":[1,2],"cov":[[4,0.5],[0.5,1]],"detection":4},{"track":"t2","mean":[0.1,0]}]}
`},
		{"metrics", File{Header: header(Metrics), Metrics: []Metric{{Name: "gospa", Step: 2, Value: 3.5}, {Name: "gospa_mean", Step: -1, Value: math.Inf(1)}}},
			`{"golden":1,"kind":"metrics","scenario":"harbour_approach","scenario_sha256":"5be1c0ffee","run":0,"seed":81,"protocol":1,"trackgate":"(devel)","go":"go1.26.8","goos":"linux","goarch":"amd64","goamd64":"v1"}
{"metric":"gospa","step":2,"value":3.5}
{"metric":"gospa_mean","value":"+Inf"}
`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := Marshal(tt.file)
			if err != nil {
				t.Fatal(err)
			}
			if diff := cmp.Diff(tt.want, string(got)); diff != "" {
				t.Errorf("Marshal (-want +got):\n%s", diff)
			}
		})
	}
}

func TestNegativeZeroWritten(t *testing.T) {
	// mot.Estimate mean [-0] must keep its sign: "-0" is a valid JSON number
	// (RFC 8259 §6 grammar: optional minus, int, frac, exp).
	if got := string(AppendFloat(nil, math.Copysign(0, -1))); got != "-0" {
		t.Errorf("AppendFloat(-0) = %q, want %q", got, "-0")
	}
}

// TestFloatRoundTrip checks on random bit patterns (including subnormals,
// ±0, ±Inf and NaN) that the written form parses back to the same bits and
// is the shortest decimal that does so.
func TestFloatRoundTrip(t *testing.T) {
	rng := testRand(t)
	vals := []float64{0, math.Copysign(0, -1), math.SmallestNonzeroFloat64, -math.SmallestNonzeroFloat64,
		math.MaxFloat64, math.Inf(1), math.Inf(-1), math.NaN(), 0.1, 1e21, 1e-7, 2.2250738585072014e-308, 100000, 123000, 1 << 60}
	for i := 0; i < 20000; i++ {
		b := rng.Uint64()
		if i%3 == 0 {
			b &^= 0x7FF << 52 // zero exponent: a subnormal (or ±0)
		}
		vals = append(vals, math.Float64frombits(b))
	}
	for _, v := range vals {
		text := AppendFloat(nil, v)
		var n num
		if err := n.UnmarshalJSON(text); err != nil {
			t.Fatalf("UnmarshalJSON(%s) for bits %#x: %v", text, math.Float64bits(v), err)
		}
		if math.IsNaN(v) {
			if !math.IsNaN(float64(n)) {
				t.Fatalf("NaN came back as %v", float64(n))
			}
			continue
		}
		if math.Float64bits(float64(n)) != math.Float64bits(v) {
			t.Fatalf("%#x written as %s came back as %#x", math.Float64bits(v), text, math.Float64bits(float64(n)))
		}
		if math.IsInf(v, 0) || v == 0 {
			continue
		}
		// Shortest: one significant digit fewer must not round-trip.
		digits := sigDigits(string(text))
		if digits > 1 {
			shorter := strconv.FormatFloat(v, 'e', digits-2, 64)
			if w, _ := strconv.ParseFloat(shorter, 64); w == v {
				t.Fatalf("%s is not shortest: %s also round-trips", text, shorter)
			}
		}
	}
}

// sigDigits counts the significant digits of a decimal number.
func sigDigits(s string) int {
	s = strings.TrimPrefix(s, "-")
	if i := strings.IndexAny(s, "eE"); i >= 0 {
		s = s[:i]
	}
	s = strings.Trim(strings.Replace(s, ".", "", 1), "0")
	return len(s)
}

func randFile(rng *rand.Rand, k Kind) File {
	f := File{Header: header(k)}
	f.Header.Seed = rng.Uint64()
	f.Header.Run = rng.IntN(50)
	fl := func() float64 {
		switch rng.IntN(8) {
		case 0:
			return math.Float64frombits(rng.Uint64() &^ (0x7FF << 52))
		case 1:
			return math.Copysign(0, -1)
		}
		return rng.NormFloat64() * math.Pow(10, float64(rng.IntN(20)-10))
	}
	vec := func(n int) []float64 {
		v := make([]float64, n)
		for i := range v {
			v[i] = fl()
		}
		return v
	}
	for s := 0; s < 1+rng.IntN(6); s++ {
		step := s*2 + rng.IntN(2)
		switch k {
		case Tape:
			st := Step{Scan: mot.Scan{Step: step, Time: float64(step) * 0.5}, Truth: mot.Truth{Step: step}}
			for d := 0; d < rng.IntN(4); d++ {
				st.Scan.Detections = append(st.Scan.Detections, mot.Detection{ID: 10*step + d, Z: vec(2)})
				st.Truth.Origins = append(st.Truth.Origins, mot.Origin{Detection: 10*step + d, Object: []string{"", "launch"}[rng.IntN(2)]})
			}
			st.Truth.Objects = []mot.TruthState{{Object: "launch", X: vec(4)}}
			f.Steps = append(f.Steps, st)
		case Reference, Output:
			fr := mot.Frame{Step: step, Tracks: []mot.Estimate{}}
			for j := 0; j < rng.IntN(4); j++ {
				e := mot.Estimate{Track: "trk" + strconv.Itoa(j), Mean: vec(4), Detection: mot.NoDetection}
				if rng.IntN(2) == 0 {
					e.Cov = mot.Mat{Rows: 4, Cols: 4, Data: vec(16)}
				}
				if rng.IntN(2) == 0 {
					e.HasDetection, e.Detection = true, rng.IntN(30)-1
				}
				fr.Tracks = append(fr.Tracks, e)
			}
			f.Frames = append(f.Frames, fr)
		case Metrics:
			f.Metrics = append(f.Metrics, Metric{Name: "nees", Step: step - 1, Value: fl()})
		}
	}
	return f
}

var fileOpts = cmp.Options{cmpopts.EquateEmpty(), cmp.Comparer(func(a, b float64) bool {
	return math.Float64bits(a) == math.Float64bits(b) || (math.IsNaN(a) && math.IsNaN(b))
})}

func TestMarshalReadRoundTrip(t *testing.T) {
	rng := testRand(t)
	for i := 0; i < 300; i++ {
		k := []Kind{Tape, Reference, Output, Metrics}[i%4]
		f := randFile(rng, k)
		if k == Output {
			f.Header.Tracker = "quay-tracker"
		}
		b, err := Marshal(f)
		if err != nil {
			t.Fatal(err)
		}
		got, err := Read(bytes.NewReader(b), "mem")
		if err != nil {
			t.Fatalf("Read(Marshal(f)): %v\n%s", err, b)
		}
		if diff := cmp.Diff(f, got, fileOpts); diff != "" {
			t.Fatalf("Read(Marshal(f)) (-want +got):\n%s", diff)
		}
		b2, _ := Marshal(got)
		if !bytes.Equal(b, b2) {
			t.Fatalf("re-marshalled bytes differ:\n%s\n%s", b, b2)
		}
	}
}

func TestReadFixture(t *testing.T) {
	path := filepath.Join("testdata", "harbour_approach", "run-0.reference.jsonl")
	f, err := ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if f.Header.Kind != Reference || f.Header.Seed != 81 || len(f.Frames) != 3 {
		t.Fatalf("header %+v, %d frames", f.Header, len(f.Frames))
	}
	pb := f.Frames[2].Tracks[0]
	if !math.IsNaN(pb.Mean[2]) || pb.Mean[3] != -1e-300 || !pb.HasDetection || pb.Detection != mot.NoDetection {
		t.Errorf("step 2 pilot-boat = %+v", pb)
	}
	fe := f.Frames[2].Tracks[1]
	if fe.Mean[0] != math.SmallestNonzeroFloat64 || !math.IsInf(fe.Mean[1], 1) || !math.IsInf(fe.Mean[2], -1) || fe.Mean[3] != 1e21 || fe.HasDetection {
		t.Errorf("step 2 ferry = %+v", fe)
	}
	if c := f.Frames[1].Tracks[0].Cov; c.At(2, 3) != 0 || !math.Signbit(c.At(2, 3)) || c.At(0, 1) != 1 {
		t.Errorf("step 1 cov = %v", c)
	}
	// The fixture is written in the canonical form, so writing it back
	// gives the same bytes.
	raw, _ := os.ReadFile(path)
	if b, _ := Marshal(f); !bytes.Equal(b, raw) {
		t.Errorf("Marshal(ReadFile(fixture)) differs from the fixture:\n%s", b)
	}
}

func TestReadErrors(t *testing.T) {
	const h = `{"golden":1,"kind":"reference","scenario":"s","scenario_sha256":"ab","run":0,"seed":1,"protocol":1,"trackgate":"x","go":"go1","goos":"linux","goarch":"amd64"}` + "\n"
	tests := []struct {
		name, in, want string
	}{
		{"empty", "", "f.jsonl:1: empty file"},
		{"header not json", "{golden", "f.jsonl:1: header: column 2: invalid JSON"},
		{"header version", `{"golden":7}`, `f.jsonl:1: header: field "golden": format version 7`},
		{"header unknown key", `{"golden":1,"colour":"red"}`, `f.jsonl:1: header: json: unknown field "colour"`},
		{"header bad kind", `{"golden":1,"kind":"tapes"}`, `field "kind": expected tape, reference, output, metrics or run-values`},
		{"header run type", `{"golden":1,"kind":"tape","scenario":"s","scenario_sha256":"a","run":"zero"}`, `field "run": expected int, got JSON string`},
		{"no hash", `{"golden":1,"kind":"tape","scenario":"s"}`, `missing field "scenario_sha256"`},
		{"blank line", h + "\n", "f.jsonl:2: empty line"},
		{"tracker on reference", strings.Replace(h, `"run":0`, `"tracker":"quay","run":0`, 1), `f.jsonl:1: header: field "tracker": a reference golden has no tracker, got "quay"`},
		{"output without tracker", strings.Replace(h, "reference", "output", 1), `f.jsonl:1: header: field "tracker": a tracker output golden needs a tracker name`},
		{"mean string", h + `{"step":0,"tracks":[{"track":"a","mean":["x"]}]}`, `f.jsonl:2: expected a number, "NaN", "+Inf" or "-Inf", got "x"`},
		{"mean missing", h + `{"step":0,"tracks":[{"track":"a"}]}`, `f.jsonl:2: field "tracks[0].mean": expected a non-empty array`},
		{"cov ragged", h + `{"step":0,"tracks":[{"track":"a","mean":[1,2],"cov":[[1,0],[0]]}]}`, `f.jsonl:2: field "tracks[0].cov[1]": expected 2 numbers, got 1`},
		{"cov rows", h + `{"step":0,"tracks":[{"track":"a","mean":[1,2],"cov":[[1,0]]}]}`, `expected 2 rows`},
		{"duplicate track", h + `{"step":0,"tracks":[{"track":"a","mean":[1]},{"track":"a","mean":[2]}]}`, `track "a" appears twice`},
		{"steps out of order", h + `{"step":3,"tracks":[]}` + "\n" + `{"step":3,"tracks":[]}`, `f.jsonl:3: field "step": expected a step after 3, got 3`},
		{"trailing data", h + `{"step":0,"tracks":[]} {}`, `f.jsonl:2: unexpected data after the JSON object`},
		{"no tracks", h + `{"step":0}`, `missing field "tracks"`},
		{"null number", h + `{"step":0,"tracks":[{"track":"a","mean":[null]}]}`, `got null`},
		{"bad detection", h + `{"step":0,"tracks":[{"track":"a","mean":[1],"detection":-2}]}`, `expected a detection id ≥ 0 or -1, got -2`},
		{"tape origin", strings.Replace(h, "reference", "tape", 1) + `{"step":0,"time":0,"detections":[{"id":1,"z":[1]}],"origins":[{"detection":2,"object":""}]}`, `field "origins[0].detection": expected the id of a detection of this step`},
		{"metric name", strings.Replace(h, "reference", "metrics", 1) + `{"value":1}`, `f.jsonl:2: missing field "metric"`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(tt.in), "f.jsonl")
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("Read(%q) error = %v, want it to contain %q", tt.in, err, tt.want)
			}
		})
	}
}

func TestReadCRLF(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("testdata", "harbour_approach", "run-0.reference.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	want, _ := Read(bytes.NewReader(raw), "lf")
	got, err := Read(bytes.NewReader(bytes.ReplaceAll(raw, []byte("\n"), []byte("\r\n"))), "crlf")
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(want, got, fileOpts); diff != "" {
		t.Errorf("CRLF read (-want +got):\n%s", diff)
	}
}

func TestMarshalRejects(t *testing.T) {
	bad := []File{
		{Header: Header{Format: 2, Kind: Tape, Scenario: "s", ScenarioHash: "h"}},
		{Header: Header{Format: 1, Kind: "trace", Scenario: "s", ScenarioHash: "h"}},
		{Header: Header{Format: 1, Kind: Tape, Scenario: "s"}},
		{Header: header(Metrics), Frames: []mot.Frame{{}}},
		{Header: header(Reference), Frames: []mot.Frame{{Tracks: []mot.Estimate{{Track: "a", Mean: []float64{1}, Cov: mot.Mat{Rows: 2, Cols: 2}}}}}},
		{Header: header(Output)}, // no tracker name
		{Header: func() Header { h := header(Reference); h.Tracker = "quay"; return h }()},
		{Header: header(Reference), Frames: []mot.Frame{{Tracks: []mot.Estimate{{Track: "\xff", Mean: []float64{1}}}}}},
		{Header: header(Metrics), Metrics: []Metric{{Name: "gospa\xfe", Step: -1}}},
	}
	for i, f := range bad {
		if _, err := Marshal(f); err == nil {
			t.Errorf("Marshal(bad[%d]) succeeded", i)
		}
	}
}

func FuzzRead(f *testing.F) {
	raw, _ := os.ReadFile(filepath.Join("testdata", "harbour_approach", "run-0.reference.jsonl"))
	f.Add(raw)
	f.Add([]byte(`{"golden":1,"kind":"metrics","scenario":"s","scenario_sha256":"ab","run":0,"seed":1,"go":"g","goos":"o","goarch":"a"}` + "\n" + `{"metric":"m","value":"NaN"}`))
	f.Add([]byte(`{"golden":1,"kind":"tape","scenario":"s","scenario_sha256":"ab","run":2,"seed":1,"go":"g","goos":"o","goarch":"a"}` + "\n" + `{"step":0,"time":0,"detections":[{"id":0,"z":[1e-320]}],"truth":[],"origins":[{"detection":0,"object":""}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		g, err := Read(bytes.NewReader(data), "fuzz")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fuzz:") {
				t.Fatalf("error without position: %v", err)
			}
			return
		}
		b, err := Marshal(g)
		if err != nil {
			t.Fatalf("Marshal of a file Read accepted: %v", err)
		}
		g2, err := Read(bytes.NewReader(b), "again")
		if err != nil {
			t.Fatalf("Read(Marshal(Read(data))): %v\n%s", err, b)
		}
		if diff := cmp.Diff(g, g2, fileOpts); diff != "" {
			t.Fatalf("round trip (-first +second):\n%s", diff)
		}
	})
}

func BenchmarkMarshalRead(b *testing.B) {
	rng := rand.New(rand.NewPCG(5, 6))
	f := randFile(rng, Reference)
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		data, _ := Marshal(f)
		if _, err := Read(bytes.NewReader(data), "bench"); err != nil {
			b.Fatal(err)
		}
	}
}
