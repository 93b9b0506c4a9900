package shard_test

import (
	"fmt"
	"reflect"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/result"
	"trackgate/harness/result/sample"
	"trackgate/harness/shard"
)

// TestOfHashVectors pins the hash to published FNV-1a values, so the split
// cannot change silently (which would make old shard results unmergeable
// with new ones).
func TestOfHashVectors(t *testing.T) {
	// FNV-1a 64-bit test vectors for "a" and "foobar": Fowler, Noll, Vo,
	// Eastlake, "The FNV Non-Cryptographic Hash Algorithm",
	// draft-eastlake-fnv, test vector appendix (from memory; recomputed
	// independently with offset basis 14695981039346656037 and prime
	// 1099511628211).
	vectors := map[string]uint64{"a": 0xaf63dc4c8601ec8c, "foobar": 0x85944171f73967e8}
	for name, h := range vectors {
		for _, total := range []int{1, 2, 3, 7, 64, 1000} {
			for _, run := range []int{0, 1, 5, 999} {
				want := int((h%uint64(total) + uint64(run%total)) % uint64(total))
				if got := shard.Of(name, run, total); got != want {
					t.Errorf("Of(%q, %d, %d) = %d, want %d", name, run, total, got, want)
				}
			}
		}
	}
}

func names(n int) []string {
	out := make([]string, n)
	for i := range out {
		out[i] = fmt.Sprintf("scenario_%03d_dock", i)
	}
	return out
}

func TestOfBalanced(t *testing.T) {
	for _, total := range []int{2, 3, 4, 8} {
		perShard := make([]int, total)
		uneven := 0 // scenarios whose run count is not a multiple of total
		scen := names(60)
		for si, name := range scen {
			runs := 1 + si%13
			if runs%total != 0 {
				uneven++
			}
			counts := make([]int, total)
			for r := 0; r < runs; r++ {
				counts[shard.Of(name, r, total)]++
				perShard[shard.Of(name, r, total)]++
			}
			lo, hi := minMax(counts)
			if hi-lo > 1 {
				t.Errorf("total %d: scenario %s with %d runs: counts %v differ by more than one", total, name, runs, counts)
			}
		}
		lo, hi := minMax(perShard)
		if hi-lo > uneven {
			t.Errorf("total %d: per-shard totals %v differ by more than %d, the documented bound", total, perShard, uneven)
		}
		t.Logf("total %d: runs per shard %v", total, perShard)
	}
}

func minMax(xs []int) (int, int) {
	lo, hi := xs[0], xs[0]
	for _, x := range xs {
		lo, hi = min(lo, x), max(hi, x)
	}
	return lo, hi
}

func TestOfStable(t *testing.T) {
	const total = 5
	before := map[string]int{}
	scen := names(30)
	for _, n := range scen {
		for r := 0; r < 7; r++ {
			before[fmt.Sprintf("%s/%d", n, r)] = shard.Of(n, r, total)
		}
	}
	// Add scenarios and runs: nothing that existed moves.
	for _, n := range append(scen, "crossing_new_ferry", "occlusion_new_crane") {
		for r := 0; r < 10; r++ {
			key := fmt.Sprintf("%s/%d", n, r)
			if want, ok := before[key]; ok && shard.Of(n, r, total) != want {
				t.Errorf("%s moved from shard %d to %d", key, want, shard.Of(n, r, total))
			}
		}
	}
}

func TestParse(t *testing.T) {
	tests := []struct {
		in      string
		base    int
		want    shard.Spec
		wantErr string
	}{
		{"0/4", 0, shard.Spec{Index: 0, Total: 4}, ""},
		{"3/4", 0, shard.Spec{Index: 3, Total: 4}, ""},
		{"1/4", 1, shard.Spec{Index: 0, Total: 4}, ""},
		{" 4 / 4 ", 1, shard.Spec{Index: 3, Total: 4}, ""},
		{"1/1", 1, shard.Spec{Index: 0, Total: 1}, ""},
		{"4/4", 0, shard.Spec{}, "with base 0, K runs from 0 to 3"},
		{"0/4", 1, shard.Spec{}, "with base 1, K runs from 1 to 4"},
		{"2/0", 0, shard.Spec{}, "at least 1"},
		{"2", 0, shard.Spec{}, "want K/N"},
		{"a/4", 0, shard.Spec{}, "whole numbers"},
		{"1/4", 2, shard.Spec{}, "want 0 or 1"},
		{"-1/4", 0, shard.Spec{}, "K runs from 0"},
		{"2/4:scenarios", 1, shard.Spec{Index: 1, Total: 4, Scenarios: true}, ""},
		{" 0/2 : scenarios ", 0, shard.Spec{Index: 0, Total: 2, Scenarios: true}, ""},
		{"0/2:runs", 0, shard.Spec{}, `only "scenarios" is known`},
	}
	for _, tt := range tests {
		got, err := shard.Parse(tt.in, tt.base)
		if tt.wantErr != "" {
			if err == nil || !strings.Contains(err.Error(), tt.wantErr) {
				t.Errorf("Parse(%q, %d) error = %v, want %q", tt.in, tt.base, err, tt.wantErr)
			}
			continue
		}
		if err != nil || got != tt.want {
			t.Errorf("Parse(%q, %d) = %v, %v, want %v", tt.in, tt.base, got, err, tt.want)
		}
	}
}

func TestFromEnv(t *testing.T) {
	env := func(kv ...string) func(string) string {
		m := map[string]string{}
		for i := 0; i < len(kv); i += 2 {
			m[kv[i]] = kv[i+1]
		}
		return func(k string) string { return m[k] }
	}
	tests := []struct {
		name, system string
		total        int
		getenv       func(string) string
		want         shard.Spec
		wantErr      string
	}{
		{"gitlab first job", "gitlab", 0, env("CI_NODE_INDEX", "1", "CI_NODE_TOTAL", "3"), shard.Spec{Index: 0, Total: 3}, ""},
		{"gitlab last job", "gitlab", 0, env("CI_NODE_INDEX", "3", "CI_NODE_TOTAL", "3"), shard.Spec{Index: 2, Total: 3}, ""},
		{"gitlab zero is invalid", "gitlab", 0, env("CI_NODE_INDEX", "0", "CI_NODE_TOTAL", "3"), shard.Spec{}, "base 1"},
		{"kubernetes with total", "kubernetes", 6, env("JOB_COMPLETION_INDEX", "5"), shard.Spec{Index: 5, Total: 6}, ""},
		{"kubernetes without total", "kubernetes", 0, env("JOB_COMPLETION_INDEX", "5"), shard.Spec{}, "not known"},
		{"circleci", "circleci", 0, env("CIRCLE_NODE_INDEX", "0", "CIRCLE_NODE_TOTAL", "2"), shard.Spec{Index: 0, Total: 2}, ""},
		{"buildkite", "buildkite", 4, env("BUILDKITE_PARALLEL_JOB", "3", "BUILDKITE_PARALLEL_JOB_COUNT", "4"), shard.Spec{Index: 3, Total: 4}, ""},
		{"total disagrees", "gitlab", 4, env("CI_NODE_INDEX", "1", "CI_NODE_TOTAL", "3"), shard.Spec{}, "but 4 shards were given"},
		{"unset", "gitlab", 0, env(), shard.Spec{}, "CI_NODE_INDEX is not set"},
		{"github", "github", 0, env(), shard.Spec{}, "unknown CI system"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			got, err := shard.FromEnv(tt.system, tt.total, tt.getenv)
			if tt.wantErr != "" {
				if err == nil || !strings.Contains(err.Error(), tt.wantErr) {
					t.Errorf("error = %v, want %q", err, tt.wantErr)
				}
				return
			}
			if err != nil || got != tt.want {
				t.Errorf("= %v, %v, want %v", got, err, tt.want)
			}
		})
	}
}

// TestSplitMerge splits the sample suite with Select and merges the parts
// back: the result equals the unsharded suite. Scenario summaries (metrics
// and gates) of scenarios spread over several shards are not carried by
// the parts (Select drops them, as a real shard cannot compute them), so
// they are compared only for the unsharded case.
func TestSplitMerge(t *testing.T) {
	full := sample.Suite()
	for total := 1; total <= 6; total++ {
		t.Run(fmt.Sprint(total), func(t *testing.T) {
			var parts []*result.Suite
			// Give the parts in reverse order: Merge must not depend on it.
			for i := total - 1; i >= 0; i-- {
				parts = append(parts, shard.Select(full, shard.Spec{Index: i, Total: total}))
			}
			runs := 0
			for _, p := range parts {
				for _, sc := range p.Scenarios {
					runs += len(sc.Runs)
				}
			}
			if runs != 10 {
				t.Fatalf("parts hold %d runs, want the sample's 10", runs)
			}
			got, err := result.Merge(parts...)
			if err != nil {
				t.Fatal(err)
			}
			opts := []cmp.Option{cmpopts.EquateNaNs(), cmpopts.EquateEmpty(),
				// Traces are large and free of NaN: compare them whole,
				// which keeps the test fast under -race.
				cmp.Comparer(func(a, b result.Trace) bool { return reflect.DeepEqual(a, b) })}
			if total > 1 {
				opts = append(opts, cmpopts.IgnoreFields(result.Scenario{}, "Metrics", "Gates"), cmpopts.IgnoreFields(result.Suite{}, "Notes"))
			}
			// Statuses agree for total > 1 too: the sample's failing gate
			// sits in a scenario that also has a failing run.
			if d := cmp.Diff(full, got, opts...); d != "" {
				t.Errorf("Merge(Select...) (-unsharded +merged):\n%s", d)
			}
		})
	}
}

// TestSplitMergeWholeScenarios deals whole scenarios: every shard holds all
// runs of its scenarios, keeps their metrics and gates, and the merge
// equals the unsharded suite in full.
func TestSplitMergeWholeScenarios(t *testing.T) {
	full := sample.Suite()
	for total := 2; total <= 5; total++ {
		var parts []*result.Suite
		for i := 0; i < total; i++ {
			spec := shard.Spec{Index: i, Total: total, Scenarios: true}
			p := shard.Select(full, spec)
			for j, sc := range p.Scenarios {
				if n := len(sc.Runs); n != 0 && n != len(full.Scenarios[j].Runs) {
					t.Fatalf("shard %v splits scenario %s", spec, sc.Name)
				}
				for _, r := range sc.Runs {
					if !spec.Holds(sc.Name, r.Index) || shard.Of(sc.Name, 0, total) != i {
						t.Fatalf("run %d of %s in shard %d, its run 0 in %d", r.Index, sc.Name, i, shard.Of(sc.Name, 0, total))
					}
				}
			}
			parts = append(parts, p)
		}
		got, err := result.Merge(parts...)
		if err != nil {
			t.Fatal(err)
		}
		if d := cmp.Diff(full, got, cmpopts.EquateNaNs(), cmpopts.EquateEmpty(),
			cmp.Comparer(func(a, b result.Trace) bool { return reflect.DeepEqual(a, b) })); d != "" {
			t.Errorf("total %d: merged (-unsharded +merged):\n%s", total, d)
		}
		// Mixing the two ways of dealing is refused.
		parts[0].Shard.Scenarios = false
		if _, err := result.Merge(parts...); err == nil || !strings.Contains(err.Error(), "whole scenarios") {
			t.Errorf("total %d: mixed dealing: error %v", total, err)
		}
	}
}

func TestMergeReportsOverlapAndGaps(t *testing.T) {
	full := sample.Suite()
	s0 := shard.Select(full, shard.Spec{Index: 0, Total: 3})
	s1 := shard.Select(full, shard.Spec{Index: 1, Total: 3})
	s2 := shard.Select(full, shard.Spec{Index: 2, Total: 3})
	tests := []struct {
		name  string
		parts []*result.Suite
		want  string
	}{
		{"missing shard", []*result.Suite{s0, s2}, "shards missing: index 1 of 3"},
		{"same shard twice", []*result.Suite{s0, s1, s1, s2}, "shard 1/3 given twice"},
		{"wrong total", []*result.Suite{s0, s1, shard.Select(full, shard.Spec{Index: 2, Total: 4})}, "shard total 4, the first result says 3"},
		{"run twice", []*result.Suite{s0, s1, relabel(s0, 2)}, "appears twice"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := result.Merge(tt.parts...)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("Merge error = %v, want %q", err, tt.want)
			}
		})
	}
}

// relabel returns a copy of s claiming to be shard index.
func relabel(s *result.Suite, index int) *result.Suite {
	c := *s
	c.Shard = &result.Shard{Index: index, Total: s.Shard.Total}
	return &c
}

func BenchmarkOf(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		shard.Of("crossing_harbour_ferries", 17, 8)
	}
}

func FuzzParse(f *testing.F) {
	for _, s := range []string{"0/4", "1/4", " 3 / 8 ", "4/4", "x/y", "/", "-1/2", "9999999999999999999/1"} {
		f.Add(s, 0)
		f.Add(s, 1)
	}
	f.Fuzz(func(t *testing.T, text string, base int) {
		spec, err := shard.Parse(text, base)
		if err != nil {
			return
		}
		if !spec.Valid() {
			t.Fatalf("Parse(%q, %d) = %v, which is not a valid shard", text, base, spec)
		}
		// The spec written back with the same base parses to itself.
		back := fmt.Sprintf("%d/%d", spec.Index+base, spec.Total)
		if spec.Scenarios {
			back += ":scenarios"
		}
		again, err := shard.Parse(back, base)
		if err != nil || again != spec {
			t.Fatalf("round trip of %v: %v, %v", spec, again, err)
		}
	})
}
