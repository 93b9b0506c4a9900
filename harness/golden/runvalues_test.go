package golden

import (
	"bytes"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

func runValuesFile() File {
	h := NewHeader(RunValues, "canal-lock-barges", "9f3c", 0, 0, 1)
	h.Tracker = "lock-keeper"
	return File{Header: h, Runs: []RunValue{
		{Run: 0, Seed: 7001, Values: map[string]float64{"mean_gospa": 1.25, "id_switches": 0, "nees_in_band": math.NaN()}},
		{Run: 1, Seed: 7002, Values: map[string]float64{"mean_gospa": 2.5, "id_switches": 1}},
		{Run: 4, Seed: 7005, Values: map[string]float64{}},
	}}
}

// TestRunValuesRoundTrip: a run values file reads back to what was written,
// with its values in name order on each line.
func TestRunValuesRoundTrip(t *testing.T) {
	f := runValuesFile()
	b, err := Marshal(f)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
	if want := `{"run":0,"seed":7001,"values":{"id_switches":0,"mean_gospa":1.25,"nees_in_band":"NaN"}}`; lines[1] != want {
		t.Errorf("record line\n got %s\nwant %s", lines[1], want)
	}
	g, err := Read(bytes.NewReader(b), "metrics.jsonl")
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(f, g, cmp.Comparer(func(a, b float64) bool {
		return math.Float64bits(a) == math.Float64bits(b)
	})); d != "" {
		t.Errorf("round trip (-want +got):\n%s", d)
	}
}

// TestRunValuesErrors: bad records name the line and field.
func TestRunValuesErrors(t *testing.T) {
	head := `{"golden":1,"kind":"run-values","scenario":"s","scenario_sha256":"h","tracker":"t","run":0,"seed":0,"protocol":1,"trackgate":"","go":"go","goos":"linux","goarch":"arm64"}` + "\n"
	for _, tt := range []struct{ name, body, want string }{
		{"no run", `{"seed":1,"values":{}}`, `f.jsonl:2: field "run"`},
		{"negative run", `{"run":-1,"seed":1,"values":{}}`, `f.jsonl:2: field "run"`},
		{"no seed", `{"run":0,"values":{}}`, `f.jsonl:2: missing field "seed"`},
		{"no values", `{"run":0,"seed":1}`, `f.jsonl:2: missing field "values"`},
		{"value not a number", `{"run":0,"seed":1,"values":{"mean_gospa":"x"}}`, `f.jsonl:2:`},
		{"empty name", `{"run":0,"seed":1,"values":{"":1}}`, `f.jsonl:2: field "values"`},
		{"runs out of order", `{"run":2,"seed":1,"values":{}}` + "\n" + `{"run":2,"seed":1,"values":{}}`, `f.jsonl:3: field "run": expected a run after 2`},
		{"unknown field", `{"run":0,"seed":1,"values":{},"step":3}`, `f.jsonl:2:`},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Read(strings.NewReader(head+tt.body+"\n"), "f.jsonl")
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want it to contain %q", err, tt.want)
			}
		})
	}
	noTracker := strings.Replace(head, `"tracker":"t",`, "", 1)
	if _, err := Read(strings.NewReader(noTracker), "f.jsonl"); err == nil || !strings.Contains(err.Error(), "tracker") {
		t.Errorf("run values without a tracker: %v", err)
	}
	bad := runValuesFile()
	bad.Runs[2].Run = 1
	if _, err := Marshal(bad); err == nil {
		t.Error("Marshal accepted runs out of order")
	}
}

// TestRunValuesPath: the file sits in the tracker's folder and parses back.
func TestRunValuesPath(t *testing.T) {
	id := ID{Scenario: "canal-lock-barges", Tracker: "lock-keeper", Kind: RunValues}
	p, err := Path("g", id)
	if err != nil {
		t.Fatal(err)
	}
	if want := filepath.Join("g", "canal-lock-barges", "lock-keeper", "metrics.jsonl"); p != want {
		t.Fatalf("Path %s, want %s", p, want)
	}
	rel, _ := filepath.Rel("g", p)
	if got, ok := ParsePath(rel); !ok || got != id {
		t.Fatalf("ParsePath(%s) = %+v %v, want %+v", rel, got, ok, id)
	}
	if _, err := Path("g", ID{Scenario: "s", Kind: RunValues}); err == nil {
		t.Error("a run values file without a tracker has a path")
	}
	if !(Inventory{Runs: map[string]int{"canal-lock-barges": 3}}).Uses(id) {
		t.Error("the inventory of the scenario does not use its run values file")
	}
}

// FuzzReadRunValues: any input either reads into a file that marshals and
// reads back the same, or gives an error naming the file; never a panic.
func FuzzReadRunValues(f *testing.F) {
	b, _ := Marshal(runValuesFile())
	f.Add(b)
	f.Add([]byte(`{"golden":1,"kind":"run-values","scenario":"s","scenario_sha256":"h","tracker":"t","run":0,"seed":0,"protocol":1,"trackgate":"","go":"go","goos":"linux","goarch":"arm64"}` + "\n" + `{"run":0,"seed":1,"values":{"a":"+Inf"}}`))
	f.Fuzz(func(t *testing.T, data []byte) {
		g, err := Read(bytes.NewReader(data), "fz.jsonl")
		if err != nil {
			if !strings.HasPrefix(err.Error(), "fz.jsonl") {
				t.Fatalf("error does not name the file: %v", err)
			}
			return
		}
		if g.Header.Kind != RunValues {
			return
		}
		out, err := Marshal(g)
		if err != nil {
			return // e.g. a name that is not valid UTF-8
		}
		h, err := Read(bytes.NewReader(out), "again.jsonl")
		if err != nil {
			t.Fatalf("re-reading what was written: %v", err)
		}
		if len(h.Runs) != len(g.Runs) {
			t.Fatalf("%d runs read back, want %d", len(h.Runs), len(g.Runs))
		}
	})
}

// BenchmarkReadRunValues reads a run values file of 1000 runs with eight
// values each, what a check reads once per run of such a scenario.
func BenchmarkReadRunValues(b *testing.B) {
	f := runValuesFile()
	f.Runs = nil
	for r := range 1000 {
		v := map[string]float64{}
		for i, n := range []string{"false_tracks", "id_switches", "mean_gospa", "mean_nees", "missed_objects", "nees_in_band", "position_rmse", "track_breaks"} {
			v[n] = float64(r*8+i) / 7
		}
		f.Runs = append(f.Runs, RunValue{Run: r, Seed: uint64(9000 + r), Values: v})
	}
	data, err := Marshal(f)
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if _, err := Read(bytes.NewReader(data), "metrics.jsonl"); err != nil {
			b.Fatal(err)
		}
	}
}
