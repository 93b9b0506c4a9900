package result_test

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"
	"github.com/santhosh-tekuri/jsonschema/v6"

	"trackgate/harness/result"
	"trackgate/harness/result/sample"
)

func ptr[T any](v T) *T { return &v }

// small is the Suite that testdata/small.json spells out by hand.
func small() *result.Suite {
	return &result.Suite{
		Version:  1,
		Tool:     "trackgate test",
		Platform: result.Platform{GoVersion: "go1.26.8", GOOS: "linux", GOARCH: "arm64"},
		Tracker:  result.Tracker{Command: []string{"./pier-tracker"}, Name: "pier-tracker", Version: "0.9"},
		Against:  "reference",
		Shard:    &result.Shard{Index: 1, Total: 4},
		Status:   result.Fail,
		Scenarios: []result.Scenario{{
			Name:        "crossing_pier_dinghies",
			File:        "scenarios/crossing_pier_dinghies.yaml",
			Description: `Two dinghies round the pier head "close" <hauled> & tacking.`,
			Hash:        "ab12",
			StateDim:    4, MeasDim: 2, Position: []int{0, 2},
			Status: result.Fail,
			Runs: []result.Run{{
				Index: 5, Seed: math.MaxUint64, Status: result.Fail,
				Checks: []result.Check{{Name: "reference", Status: result.Fail,
					First: &result.Divergence{Step: 3, Kind: "association", Message: "swap", Margin: ptr(math.Inf(1)), Probability: ptr(0.25)}}},
				Metrics: &result.RunMetrics{
					GOSPA:     []float64{1.5, math.NaN(), math.Inf(-1), 1e-7, 1e21, -0.125},
					MeanGOSPA: math.NaN(),
				},
			}},
		}},
	}
}

// TestSmallFile checks the encoding against a file written by hand from the
// format described in the package documentation (not produced by Marshal).
func TestSmallFile(t *testing.T) {
	want, err := os.ReadFile("testdata/small.json")
	if err != nil {
		t.Fatal(err)
	}
	got, err := result.Marshal(small())
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("Marshal(small) differs from testdata/small.json (-want +got):\n%s", cmp.Diff(string(want), string(got)))
	}
	s, err := result.Unmarshal("small.json", want)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(small(), s, cmpopts.EquateNaNs()); d != "" {
		t.Errorf("Unmarshal(small.json) (-want +got):\n%s", d)
	}
	// The signs of the infinities survive.
	if g := s.Scenarios[0].Runs[0].Metrics.GOSPA[2]; !math.IsInf(g, -1) {
		t.Errorf("gospa[2] = %v, want -Inf", g)
	}
}

func TestRoundTripSample(t *testing.T) {
	s := sample.Suite()
	a, err := result.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	b, err := result.Marshal(sample.Suite())
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Fatal("two encodings of the same suite differ")
	}
	back, err := result.Unmarshal("sample", a)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(s, back, cmpopts.EquateNaNs()); d != "" {
		t.Fatalf("round trip (-want +got):\n%s", d)
	}
	// The standard decoder reads the file too (the encoding is plain JSON).
	var anyv any
	if err := json.Unmarshal(a, &anyv); err != nil {
		t.Fatalf("encoding/json rejects the file: %v", err)
	}
}

func TestUnmarshalErrors(t *testing.T) {
	tests := []struct {
		name, in, want string
	}{
		{"empty", "", "f.json: empty file"},
		{"syntax", "{\n  \"version\": 1,\n  \"tool\": tru\n}", "f.json:3:14:"},
		{"truncated", "{\"version\": 1, \"tool\": \"x", "f.json:1:26: invalid JSON: file ends inside a value"},
		{"top array", "[1]", "expected a JSON object at the top, got array"},
		{"no version", `{"tool":"x"}`, "version: missing"},
		{"newer version", `{"version": 2}`, "written by result version 2; this trackgate reads version 1"},
		{"version string", `{"version": "1"}`, `version: expected an integer, got string "1"`},
		{"seed negative", `{"version":1,"scenarios":[{"runs":[{"seed":-1}]}]}`, "scenarios[0].runs[0].seed: expected an unsigned integer, got number -1"},
		{"float word", `{"version":1,"scenarios":[{"runs":[{"metrics":{"gospa":[1,"nan"]}}]}]}`, `scenarios[0].runs[0].metrics.gospa[1]: expected a number or "NaN", "Infinity", "-Infinity", got string "nan"`},
		{"ellipse short", `{"version":1,"scenarios":[{"runs":[{"trace":{"truth":[{"points":[{"ellipse":[1,2]}]}]}}]}]}`, "trace.truth[0].points[0].ellipse: expected an array of 3 numbers, got an array of 2"},
		{"trailing", `{"version":1} {}`, "unexpected data after the result object"},
		{"name number", `{"version":1,"tool":7}`, "f.json:1:21: tool: expected a string, got number 7"},
		{"line and column", "{\"version\": 1,\n \"scenarios\": [\n  {\"runs\": [{\"seed\": \"x\"}]}\n ]\n}\n",
			`f.json:3:22: scenarios[0].runs[0].seed: expected an unsigned integer, got string "x"`},
		{"second element", "{\"version\": 1, \"scenarios\": [{}, {\"position\": [0, 1.5]}]}",
			"f.json:1:51: scenarios[1].position[1]: expected an integer, got number 1.5"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := result.Unmarshal("f.json", []byte(tt.in))
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("Unmarshal(%q) error = %v, want it to contain %q", tt.in, err, tt.want)
			}
		})
	}
}

func TestUnknownMembersIgnored(t *testing.T) {
	s, err := result.Unmarshal("f", []byte(`{"version":1,"tool":"x","added_later":{"a":[1]}}`))
	if err != nil || s.Tool != "x" {
		t.Fatalf("got %+v, %v", s, err)
	}
}

func TestWriteRead(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "out.json")
	if err := os.WriteFile(path, []byte("old"), 0o600); err != nil {
		t.Fatal(err)
	}
	s := small()
	if err := result.Write(path, s); err != nil {
		t.Fatal(err)
	}
	back, err := result.Read(path)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(s, back, cmpopts.EquateNaNs()); d != "" {
		t.Errorf("Read(Write(s)) (-want +got):\n%s", d)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries after Write, want only out.json (temp file left?)", len(entries))
	}
	if fi, _ := os.Stat(path); fi.Mode().Perm() != 0o644 {
		t.Errorf("mode = %v, want 0644", fi.Mode().Perm())
	}
	if err := result.Write(filepath.Join(dir, "missing", "x.json"), s); err == nil {
		t.Error("Write into a missing directory succeeded")
	}
	if _, err := result.Read(filepath.Join(dir, "none.json")); err == nil {
		t.Error("Read of a missing file succeeded")
	}
}

func compileSchema(t testing.TB) *jsonschema.Schema {
	t.Helper()
	doc, err := jsonschema.UnmarshalJSON(bytes.NewReader(result.Schema()))
	if err != nil {
		t.Fatal(err)
	}
	c := jsonschema.NewCompiler()
	if err := c.AddResource("schema.json", doc); err != nil {
		t.Fatal(err)
	}
	sch, err := c.Compile("schema.json")
	if err != nil {
		t.Fatal(err)
	}
	return sch
}

func validate(t *testing.T, sch *jsonschema.Schema, data []byte) error {
	t.Helper()
	inst, err := jsonschema.UnmarshalJSON(bytes.NewReader(data))
	if err != nil {
		t.Fatal(err)
	}
	return sch.Validate(inst)
}

func TestSchemaAcceptsFixtures(t *testing.T) {
	sch := compileSchema(t)
	enc, err := result.Marshal(sample.Suite())
	if err != nil {
		t.Fatal(err)
	}
	small, err := os.ReadFile("testdata/small.json")
	if err != nil {
		t.Fatal(err)
	}
	for name, data := range map[string][]byte{"sample": enc, "small.json": small} {
		if err := validate(t, sch, data); err != nil {
			t.Errorf("%s does not validate: %v", name, err)
		}
	}
}

func TestSchemaRejects(t *testing.T) {
	sch := compileSchema(t)
	good, _ := os.ReadFile("testdata/small.json")
	tests := []struct{ name, from, to string }{
		{"version 2", `"version": 1`, `"version": 2`},
		{"bad status", `"status": "fail",` + "\n  \"scenarios\"", `"status": "broken",` + "\n  \"scenarios\""},
		{"nan lower case", `"NaN", "-Infinity"`, `"nan", "-Infinity"`},
		{"unknown member", `"hash": "ab12",`, `"hash": "ab12", "colour": "red",`},
		{"negative shard", `"index": 1`, `"index": -1`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			bad := strings.Replace(string(good), tt.from, tt.to, 1)
			if bad == string(good) {
				t.Fatalf("fixture does not contain %q", tt.from)
			}
			if err := validate(t, sch, []byte(bad)); err == nil {
				t.Errorf("schema accepted a file with %s", tt.name)
			}
		})
	}
}

// TestSchemaCoversModel checks that every JSON member of the Go model is
// declared in schema.json and every declared member exists in the model.
func TestSchemaCoversModel(t *testing.T) {
	var doc struct {
		Defs map[string]struct {
			Properties map[string]any `json:"properties"`
			Required   []string       `json:"required"`
		} `json:"$defs"`
	}
	if err := json.Unmarshal(result.Schema(), &doc); err != nil {
		t.Fatal(err)
	}
	types := map[string]reflect.Type{
		"suite": reflect.TypeFor[result.Suite](), "platform": reflect.TypeFor[result.Platform](),
		"tracker": reflect.TypeFor[result.Tracker](), "shard": reflect.TypeFor[result.Shard](),
		"scenario": reflect.TypeFor[result.Scenario](), "run": reflect.TypeFor[result.Run](),
		"check": reflect.TypeFor[result.Check](), "divergence": reflect.TypeFor[result.Divergence](),
		"diff": reflect.TypeFor[result.Diff](), "fault": reflect.TypeFor[result.Fault](),
		"run_metrics": reflect.TypeFor[result.RunMetrics](), "metrics": reflect.TypeFor[result.Metrics](),
		"gate": reflect.TypeFor[result.Gate](), "trace": reflect.TypeFor[result.Trace](),
		"path": reflect.TypeFor[result.Path](), "point": reflect.TypeFor[result.Point](),
	}
	for def, typ := range types {
		d, ok := doc.Defs[def]
		if !ok {
			t.Errorf("schema has no $defs/%s for %s", def, typ)
			continue
		}
		members := map[string]bool{}
		for i := 0; i < typ.NumField(); i++ {
			tag := typ.Field(i).Tag.Get("json")
			name, opts, _ := strings.Cut(tag, ",")
			members[name] = true
			if _, ok := d.Properties[name]; !ok {
				t.Errorf("$defs/%s lacks member %q of %s", def, name, typ)
			}
			required := !strings.Contains(opts, "omitempty")
			if got := contains(d.Required, name); got != required {
				t.Errorf("$defs/%s: %q required = %v, want %v (omitempty decides)", def, name, got, required)
			}
		}
		for name := range d.Properties {
			if !members[name] {
				t.Errorf("$defs/%s declares %q, which %s does not have", def, name, typ)
			}
		}
	}
}

func contains(xs []string, x string) bool {
	for _, y := range xs {
		if y == x {
			return true
		}
	}
	return false
}

func FuzzUnmarshal(f *testing.F) {
	small, _ := os.ReadFile("testdata/small.json")
	f.Add(small)
	f.Add([]byte(`{"version":1,"scenarios":[{"runs":[{"seed":3}]}]}`))
	f.Add([]byte(`{"version":1,"scenarios":null}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := result.Unmarshal("fuzz", data)
		if err != nil {
			return
		}
		enc, err := result.Marshal(s)
		if err != nil {
			t.Fatalf("Marshal after a good Unmarshal: %v", err)
		}
		back, err := result.Unmarshal("again", enc)
		if err != nil {
			t.Fatalf("re-reading our own encoding: %v\n%s", err, enc)
		}
		if d := cmp.Diff(s, back, cmpopts.EquateNaNs(), cmpopts.EquateEmpty()); d != "" {
			t.Fatalf("round trip (-first +second):\n%s", d)
		}
	})
}

func BenchmarkMarshalSample(b *testing.B) {
	s := sample.Suite()
	b.ReportAllocs()
	for b.Loop() {
		if _, err := result.Marshal(s); err != nil {
			b.Fatal(err)
		}
	}
}
