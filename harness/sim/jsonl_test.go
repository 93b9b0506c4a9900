package sim

import (
	"bytes"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/mot"
)

func TestReadRoundTrip(t *testing.T) {
	spec := quayScene()
	for r := range 3 {
		run := Run(spec, r)
		data := render(t, spec, run)
		rec, err := Read(bytes.NewReader(data), "run.jsonl")
		if err != nil {
			t.Fatalf("Read: %v", err)
		}
		want := Record{Scenario: spec.Name, Hash: spec.Hash, Run: run}
		if diff := cmp.Diff(want, rec); diff != "" {
			t.Errorf("run %d: Read(Write(run)) (-want +got):\n%s", r, diff)
		}
	}
}

// TestWriteFormat checks the layout by hand-built input: key order, the
// number format of encoding/json (shortest round trip, exponent outside
// [1e-6, 1e21)), empty lists as [] and clutter as "from":"".
func TestWriteFormat(t *testing.T) {
	rec := Record{Scenario: "dock", Hash: "ab", Run: mot.Run{Index: 2, Seed: 18446744073709551615,
		Scans: []mot.Scan{
			{Step: 0, Time: 0, Detections: []mot.Detection{{ID: 0, Z: []float64{0.1, 1e21}}, {ID: 1, Z: []float64{-2.5e-7, 100}}}},
			{Step: 1, Time: 0.25},
		},
		Truth: []mot.Truth{
			{Step: 0, Objects: []mot.TruthState{{Object: "skiff", X: []float64{1, math.Copysign(0, -1)}}}, Origins: []mot.Origin{{Detection: 0, Object: "skiff"}, {Detection: 1}}},
			{Step: 1},
		},
	}}
	var b bytes.Buffer
	if err := Write(&b, rec); err != nil {
		t.Fatal(err)
	}
	want := `{"kind":"trackgate-simulation","version":1,"scenario":"dock","hash":"ab","run":2,"seed":18446744073709551615,"steps":2}
{"step":0,"time":0,"detections":[{"id":0,"z":[0.1,1e+21]},{"id":1,"z":[-2.5e-7,100]}],"objects":[{"object":"skiff","x":[1,-0]}],"sources":[{"detection":0,"from":"skiff"},{"detection":1,"from":""}]}
{"step":1,"time":0.25,"detections":[],"objects":[],"sources":[]}
`
	if diff := cmp.Diff(want, b.String()); diff != "" {
		t.Errorf("Write (-want +got):\n%s", diff)
	}
}

func TestWriteRejectsNonFinite(t *testing.T) {
	rec := Record{Run: mot.Run{
		Scans: []mot.Scan{{Step: 0, Detections: []mot.Detection{{ID: 0, Z: []float64{math.Inf(1)}}}}},
		Truth: []mot.Truth{{Step: 0, Origins: []mot.Origin{{Detection: 0}}}},
	}}
	err := Write(&bytes.Buffer{}, rec)
	if err == nil || !strings.Contains(err.Error(), "step 0: detection 0: z: [0]: expected a finite number") {
		t.Errorf("Write error = %v, want one naming step 0, detection 0, z[0]", err)
	}
}

func TestReadErrors(t *testing.T) {
	const head = `{"kind":"trackgate-simulation","version":1,"scenario":"s","hash":"h","run":0,"seed":1,"steps":1}` + "\n"
	tests := []struct {
		name, in, want string
	}{
		{"empty", "", "f.jsonl:1: expected a header line"},
		{"not json", "hello\n", "f.jsonl:1: header: invalid character"},
		{"wrong kind", `{"kind":"x","version":1}` + "\n", `f.jsonl:1: header: kind: expected "trackgate-simulation"`},
		{"future version", `{"kind":"trackgate-simulation","version":2}` + "\n", "f.jsonl:1: header: version: expected 1, got 2"},
		{"missing seed", `{"kind":"trackgate-simulation","version":1,"scenario":"s","hash":"h","run":0,"steps":1}` + "\n", `f.jsonl:1: header: missing "seed"`},
		{"unknown key", `{"kind":"trackgate-simulation","version":1,"colour":1}` + "\n", `f.jsonl:1: header: json: unknown field "colour"`},
		{"cut short", head, "f.jsonl:1: expected 1 steps as the header says, got 0"},
		{"extra step", head + `{"step":0,"time":0,"detections":[],"objects":[],"sources":[]}` + "\n{}\n", "f.jsonl:3: expected the end of the file after 1 steps"},
		{"wrong step", head + `{"step":3,"time":0,"detections":[],"objects":[],"sources":[]}` + "\n", "f.jsonl:2: step: expected 0, got 3"},
		{"missing time", head + `{"step":0,"detections":[],"objects":[],"sources":[]}` + "\n", `f.jsonl:2: step 0: missing "time"`},
		{"null detections", head + `{"step":0,"time":0,"detections":null,"objects":[],"sources":[]}` + "\n", `f.jsonl:2: step 0: missing or null "detections"`},
		{"negative id", head + `{"step":0,"time":0,"detections":[{"id":-1,"z":[1]}],"objects":[],"sources":[]}` + "\n", "f.jsonl:2: step 0: detections[0].id: expected a non-negative id, got -1"},
		{"duplicate id", head + `{"step":0,"time":0,"detections":[{"id":4,"z":[1]},{"id":4,"z":[2]}],"objects":[],"sources":[]}` + "\n", "detections[1].id: expected an id unique in the run"},
		{"ragged z", head + `{"step":0,"time":0,"detections":[{"id":0,"z":[1]},{"id":1,"z":[2,3]}],"objects":[],"sources":[]}` + "\n", "f.jsonl:2: step 0: detections[1].z: expected 1 values"},
		{"no source", head + `{"step":0,"time":0,"detections":[{"id":0,"z":[1]}],"objects":[],"sources":[]}` + "\n", "f.jsonl:2: step 0: sources: expected one per detection (1), got 0"},
		{"unknown source", head + `{"step":0,"time":0,"detections":[],"objects":[],"sources":[{"detection":9,"from":""}]}` + "\n", "sources[0].detection: expected the id of a detection of this step, got 9"},
		{"two sources", head + `{"step":0,"time":0,"detections":[{"id":0,"z":[1]}],"objects":[],"sources":[{"detection":0,"from":""},{"detection":0,"from":"a"}]}` + "\n", "detection 0 has two sources"},
		{"fractional id", head + `{"step":0,"time":0,"detections":[{"id":0.5,"z":[1]}],"objects":[],"sources":[]}` + "\n", "f.jsonl:2: step 0: json: cannot unmarshal number 0.5"},
		{"trailing", head + `{"step":0,"time":0,"detections":[],"objects":[],"sources":[]} 7` + "\n", "f.jsonl:2: step 0: expected the end of the line"},
		{"blank line", head + "\n", "f.jsonl:2: step 0: expected a JSON object, got an empty line"},
		{"duplicate object", head + `{"step":0,"time":0,"detections":[],"objects":[{"object":"a","x":[1]},{"object":"a","x":[1]}],"sources":[]}` + "\n", `objects[1].object: "a" appears twice`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(tt.in), "f.jsonl")
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("Read error = %v, want one containing %q", err, tt.want)
			}
		})
	}
}

func TestReadAcceptsCRLFAndNoFinalNewline(t *testing.T) {
	spec := quayScene()
	data := render(t, spec, Run(spec, 0))
	crlf := bytes.ReplaceAll(bytes.TrimSuffix(data, []byte("\n")), []byte("\n"), []byte("\r\n"))
	rec, err := Read(bytes.NewReader(crlf), "crlf.jsonl")
	if err != nil {
		t.Fatalf("Read: %v", err)
	}
	if got := render(t, spec, rec.Run); !bytes.Equal(got, data) {
		t.Error("CRLF copy reads back differently")
	}
}

// FuzzRead checks that Read never panics and that whatever it accepts
// survives a write and a second read unchanged.
func FuzzRead(f *testing.F) {
	// Small seeds keep the fuzzer's minimisation of new inputs quick: a
	// three-step run of a cut-down quay scene, and the head of a golden.
	small := quayScene()
	small.Steps = 3
	small.Scripted = nil
	small.Objects = small.Objects[:1]
	small.Model.ClutterMean = 0.7
	f.Add(render(f, small, Run(small, 0)))
	if data, err := os.ReadFile(filepath.Join("testdata", "quay-launches-run0.jsonl")); err == nil {
		lines := bytes.SplitAfter(data, []byte("\n"))
		head := bytes.Replace(lines[0], []byte(`"steps":12`), []byte(`"steps":1`), 1)
		f.Add(append(head, lines[1]...))
	}
	f.Add([]byte(`{"kind":"trackgate-simulation","version":1,"scenario":"s","hash":"h","run":0,"seed":1,"steps":1}` + "\n" +
		`{"step":0,"time":1e-9,"detections":[{"id":3,"z":[1,-0]}],"objects":[{"object":"a","x":[2]}],"sources":[{"detection":3,"from":"\u00e9"}]}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		rec, err := Read(bytes.NewReader(data), "fuzz")
		if err != nil {
			return
		}
		var a bytes.Buffer
		if err := Write(&a, rec); err != nil {
			t.Fatalf("Write of an accepted record: %v", err)
		}
		rec2, err := Read(bytes.NewReader(a.Bytes()), "again")
		if err != nil {
			t.Fatalf("Read of Write output: %v\n%s", err, a.Bytes())
		}
		var b bytes.Buffer
		if err := Write(&b, rec2); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(a.Bytes(), b.Bytes()) {
			t.Fatalf("second round trip differs:\n%s\n%s", a.Bytes(), b.Bytes())
		}
	})
}

// marshalStep is the reference rendering of one step line with
// encoding/json (Go 1.26 standard library), which Write's hand-written
// encoder must match byte for byte.
func marshalStep(t *testing.T, sc mot.Scan, tr mot.Truth) []byte {
	t.Helper()
	so := stepOut{Step: sc.Step, Time: sc.Time, Detections: []detOut{}, Objects: []objectOut{}, Sources: []sourceOut{}}
	for _, d := range sc.Detections {
		so.Detections = append(so.Detections, detOut{ID: d.ID, Z: append([]float64{}, d.Z...)})
	}
	for _, o := range tr.Objects {
		so.Objects = append(so.Objects, objectOut{Object: o.Object, X: append([]float64{}, o.X...)})
	}
	for _, o := range tr.Origins {
		so.Sources = append(so.Sources, sourceOut{Detection: o.Detection, From: o.Object})
	}
	b, err := json.Marshal(so)
	if err != nil {
		t.Fatal(err)
	}
	return append(b, '\n')
}

func TestWriteMatchesEncodingJSON(t *testing.T) {
	r := rand.New(rand.NewPCG(99, 100))
	// Floats over the whole exponent range, both signs, the format switch
	// points 1e-6 and 1e21 and their neighbours, zeros and subnormals.
	special := []float64{0, math.Copysign(0, -1), 1e-6, math.Nextafter(1e-6, 0), 1e21, math.Nextafter(1e21, 0),
		5e-324, math.MaxFloat64, -math.MaxFloat64, 1e-7, 1.5e-10, 123456789012345678, 0.1, 1.0 / 3}
	var scans []mot.Scan
	var truth []mot.Truth
	for k := range 200 {
		sc := mot.Scan{Step: k, Time: float64(k) * 0.37}
		tr := mot.Truth{Step: k}
		for i := range 5 {
			z := make([]float64, 3)
			for j := range z {
				if r.IntN(4) == 0 {
					z[j] = special[r.IntN(len(special))]
				} else {
					z[j] = math.Ldexp(r.Float64()-0.5, r.IntN(2000)-1000)
				}
			}
			id := k*5 + i
			sc.Detections = append(sc.Detections, mot.Detection{ID: id, Z: z})
			tr.Origins = append(tr.Origins, mot.Origin{Detection: id, Object: []string{"", "a<b>&", "ë\"\\\u2028"}[r.IntN(3)]})
		}
		if k%3 != 0 {
			tr.Objects = []mot.TruthState{{Object: "skiff", X: []float64{float64(k) * 1e19, -float64(k) * 1e-9}}}
		}
		scans, truth = append(scans, sc), append(truth, tr)
	}
	spec := quayScene()
	real := Run(spec, 0)
	scans, truth = append(scans, real.Scans...), append(truth, real.Truth...)
	for k := range real.Scans {
		scans[200+k].Step, truth[200+k].Step = 200+k, 200+k
	}
	var b bytes.Buffer
	if err := Write(&b, Record{Scenario: "s", Run: mot.Run{Scans: scans, Truth: truth}}); err != nil {
		t.Fatal(err)
	}
	lines := bytes.SplitAfter(b.Bytes(), []byte("\n"))
	for k := range scans {
		want := marshalStep(t, scans[k], truth[k])
		if !bytes.Equal(lines[k+1], want) {
			t.Fatalf("step %d:\n got %s\nwant %s", k, lines[k+1], want)
		}
	}
}
