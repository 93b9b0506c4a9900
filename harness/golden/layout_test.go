package golden

import (
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
)

func TestPathLayout(t *testing.T) {
	tests := []struct {
		id   ID
		want string
	}{
		{ID{Scenario: "harbour_approach", Run: 0, Kind: Tape}, "g/harbour_approach/run-0.tape.jsonl"},
		{ID{Scenario: "harbour_approach", Run: 12, Kind: Reference}, "g/harbour_approach/run-12.reference.jsonl"},
		{ID{Scenario: "harbour_approach", Run: 3, Kind: Metrics}, "g/harbour_approach/run-3.metrics.jsonl"},
		{ID{Scenario: "warehouse_floor", Tracker: "forklift-v2", Run: 1, Kind: Output}, "g/warehouse_floor/forklift-v2/run-1.jsonl"},
		{ID{Scenario: "warehouse_floor", Tracker: "forklift-v2", Run: 1, Kind: Metrics}, "g/warehouse_floor/forklift-v2/run-1.metrics.jsonl"},
	}
	for _, tt := range tests {
		got, err := Path("g", tt.id)
		if err != nil || got != filepath.FromSlash(tt.want) {
			t.Errorf("Path(%+v) = %q, %v, want %q", tt.id, got, err, tt.want)
			continue
		}
		rel, _ := filepath.Rel("g", got)
		if back, ok := ParsePath(rel); !ok || back != tt.id {
			t.Errorf("ParsePath(%q) = %+v, %v, want %+v", rel, back, ok, tt.id)
		}
	}
	bad := []ID{
		{Scenario: "../etc", Kind: Tape},
		{Scenario: ".hidden", Kind: Tape},
		{Scenario: "a/b", Kind: Tape},
		{Scenario: "s", Run: -1, Kind: Tape},
		{Scenario: "s", Kind: Output},
		{Scenario: "s", Tracker: "t", Kind: Tape},
		{Scenario: "s", Tracker: "t", Kind: Reference},
	}
	for _, id := range bad {
		if p, err := Path("g", id); err == nil {
			t.Errorf("Path(%+v) = %q, want an error", id, p)
		}
	}
	for _, rel := range []string{"s/run-01.tape.jsonl", "s/run-.tape.jsonl", "s/run-1.trace.jsonl", "s/t/u/run-1.jsonl", "s/run-1.jsonl", "s/t/run-x.jsonl", "README.md", "s/t/run-+1.jsonl"} {
		if id, ok := ParsePath(rel); ok {
			t.Errorf("ParsePath(%q) = %+v, want not a golden", rel, id)
		}
	}
}

func touch(t *testing.T, root string, rels ...string) {
	t.Helper()
	for _, r := range rels {
		p := filepath.Join(root, filepath.FromSlash(r))
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte("x\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

func TestOrphansAndRemove(t *testing.T) {
	root := t.TempDir()
	touch(t, root,
		"README.md",
		"harbour_approach/run-0.tape.jsonl",
		"harbour_approach/run-1.reference.jsonl",
		"harbour_approach/run-2.reference.jsonl", // run beyond the scenario's 2 runs
		"harbour_approach/quay-tracker/run-0.jsonl",
		"harbour_approach/old-tracker/run-0.jsonl",      // tracker no longer configured
		"retired_scenario/run-0.tape.jsonl",             // scenario removed
		"harbour_approach/.trackgate-tmp-run-0.jsonl-1", // killed writer
		"harbour_approach/notes.txt",                    // not ours
	)
	tree, err := Scan(root)
	if err != nil {
		t.Fatal(err)
	}
	inv := Inventory{Runs: map[string]int{"harbour_approach": 2}, Trackers: []string{"quay-tracker"}}
	j := func(r string) string { return filepath.Join(root, filepath.FromSlash(r)) }
	want := []string{j("harbour_approach/old-tracker/run-0.jsonl"), j("harbour_approach/run-2.reference.jsonl"), j("retired_scenario/run-0.tape.jsonl")}
	orphans := tree.Orphans(inv)
	if diff := cmp.Diff(want, orphans); diff != "" {
		t.Errorf("Orphans (-want +got):\n%s", diff)
	}
	if diff := cmp.Diff([]string{j("harbour_approach/notes.txt")}, tree.Strays); diff != "" {
		t.Errorf("Strays (-want +got):\n%s", diff)
	}
	if diff := cmp.Diff([]string{j("harbour_approach/.trackgate-tmp-run-0.jsonl-1")}, tree.Temps); diff != "" {
		t.Errorf("Temps (-want +got):\n%s", diff)
	}
	if err := tree.Remove(root, []string{j("harbour_approach/notes.txt")}); err == nil {
		t.Error("Remove of a stray file succeeded; it must refuse")
	}
	if err := tree.Remove(root, orphans); err != nil {
		t.Fatal(err)
	}
	for _, p := range orphans {
		if _, err := os.Stat(p); !os.IsNotExist(err) {
			t.Errorf("%s still exists", p)
		}
	}
	if _, err := os.Stat(j("retired_scenario")); !os.IsNotExist(err) {
		t.Errorf("empty folder retired_scenario kept: %v", err)
	}
	if _, err := os.Stat(j("harbour_approach/notes.txt")); err != nil {
		t.Errorf("stray file removed: %v", err)
	}
	if _, err := Scan(filepath.Join(root, "absent")); err != nil {
		t.Errorf("Scan(missing root) = %v, want an empty tree", err)
	}
}

func TestPolicy(t *testing.T) {
	env := func(v string) func(string) string {
		return func(k string) string {
			if k == "CI" {
				return v
			}
			return ""
		}
	}
	type row struct{ passing, failing, missing, outdated Action }
	tests := []struct {
		name string
		mode Mode
		flag bool
		ci   string
		want row
	}{
		{"verify", Verify, false, "", row{Keep, Fail, Fail, Fail}},
		{"update failing", UpdateFailing, false, "", row{Keep, Rewrite, Rewrite, Rewrite}},
		{"update all", UpdateAll, false, "false", row{Rewrite, Rewrite, Rewrite, Rewrite}},
		{"update all in CI env", UpdateAll, false, "true", row{Keep, Fail, Fail, Fail}},
		{"update failing with ci flag", UpdateFailing, true, "", row{Keep, Fail, Fail, Fail}},
		{"CI=1", UpdateFailing, false, "1", row{Keep, Fail, Fail, Fail}},
		{"CI=TRUE", UpdateAll, false, " TRUE ", row{Keep, Fail, Fail, Fail}},
	}
	for _, tt := range tests {
		p := NewPolicy(tt.mode, tt.flag, env(tt.ci))
		got := row{p.Decide(Passing), p.Decide(Failing), p.Decide(Missing), p.Decide(Outdated)}
		if got != tt.want {
			t.Errorf("%s: Decide = %v, want %v", tt.name, got, tt.want)
		}
	}
}

func TestFreshness(t *testing.T) {
	h := header(Reference)
	tests := []struct {
		name, hash string
		want       Freshness
	}{
		{"harbour_approach", "5be1c0ffee", Fresh},
		{"harbour_approach", "0000", Stale},
		{"warehouse_floor", "5be1c0ffee", Foreign},
	}
	for _, tt := range tests {
		if got := h.Check(tt.name, tt.hash); got != tt.want {
			t.Errorf("Check(%q, %q) = %v, want %v", tt.name, tt.hash, got, tt.want)
		}
	}
}

func TestReadFresh(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "g.jsonl")
	f := File{Header: NewHeader(Metrics, "breakwater_night", "abc123", 2, 99, 1), Metrics: []Metric{{Name: "gospa", Step: -1, Value: 2}}}
	if err := Write(path, f); err != nil {
		t.Fatal(err)
	}
	got, fr, err := ReadFresh(path, "breakwater_night", "abc123")
	if err != nil || fr != Fresh || len(got.Metrics) != 1 {
		t.Fatalf("ReadFresh(fresh) = %+v, %v, %v", got, fr, err)
	}
	if got.Header.Platform.Go != runtime.Version() || got.Header.Platform.Arch != runtime.GOARCH {
		t.Errorf("platform = %+v", got.Header.Platform)
	}
	if runtime.GOARCH == "amd64" && got.Header.Platform.AMD64 == "" {
		t.Errorf("GOAMD64 level not recorded on amd64")
	}
	got, fr, err = ReadFresh(path, "breakwater_night", "def456")
	if err != nil || fr != Stale || len(got.Metrics) != 0 || got.Header.Kind != "" {
		t.Errorf("ReadFresh(changed scenario) = %+v, %v, %v; want Stale and an empty File", got, fr, err)
	}
	if _, fr, _ = ReadFresh(path, "harbour_calm", "abc123"); fr != Foreign {
		t.Errorf("ReadFresh(other scenario) = %v, want Foreign", fr)
	}
	if _, _, err = ReadFresh(filepath.Join(dir, "absent.jsonl"), "x", "y"); err == nil {
		t.Error("ReadFresh(missing file) succeeded")
	}
}

func TestDuplicateMetric(t *testing.T) {
	src := `{"golden":1,"kind":"metrics","scenario":"s","scenario_sha256":"ab","run":0,"seed":1,"go":"g","goos":"o","goarch":"a"}
{"metric":"gospa","step":1,"value":1}
{"metric":"gospa","value":1}
{"metric":"gospa","step":1,"value":2}
`
	_, err := Read(strings.NewReader(src), "m.jsonl")
	if err == nil || err.Error() != `m.jsonl:4: metric "gospa" step 1 given twice (first at line 2)` {
		t.Errorf("Read error = %v", err)
	}
}
