package result_test

import (
	"os"
	"strings"
	"testing"

	"trackgate/harness/result"
)

// mutate returns the small test result with old replaced by new once.
func mutate(t *testing.T, old, new string) []byte {
	t.Helper()
	data, err := os.ReadFile("testdata/small.json")
	if err != nil {
		t.Fatal(err)
	}
	s := string(data)
	if !strings.Contains(s, old) {
		t.Fatalf("testdata/small.json has no %q", old)
	}
	return []byte(strings.Replace(s, old, new, 1))
}

// TestReadRejectsImpossibleValues: values of the right type that no
// trackgate writes, and that would make a reader of the result allocate
// without bound or index out of range, are rejected as the file is read,
// naming the file, line, column and member.
func TestReadRejectsImpossibleValues(t *testing.T) {
	tests := []struct {
		name, old, new, want string
	}{
		{"shard total 0", `"total": 4`, `"total": 0`, "f.json:11:34: shard.total: expected at least 1, got 0"},
		{"shard index too high", `"index": 1, "total": 4`, `"index": 4, "total": 4`, "f.json:11:22: shard.index: expected 0 to 3 (total−1), got 4"},
		{"negative shard index", `"index": 1, "total": 4`, `"index": -1, "total": 4`, "shard.index: expected 0 to 3"},
		{"state_dim 0 with runs", `"state_dim": 4`, `"state_dim": 0`, "f.json:19:20: scenarios[0].state_dim: expected 1 to 64, got 0"},
		{"state_dim huge", `"state_dim": 4`, `"state_dim": 4000000000`, "scenarios[0].state_dim: expected 1 to 64, got 4000000000"},
		{"meas_dim 0 with runs", `"meas_dim": 2`, `"meas_dim": 0`, "scenarios[0].meas_dim: expected 1 to 64, got 0"},
		{"position outside the state", `"position": [0, 2]`, `"position": [0, 4]`, "scenarios[0].position[1]: expected a state component 0 to 3, got 4"},
		{"negative position", `"position": [0, 2]`, `"position": [-1, 2]`, "scenarios[0].position[0]: expected a state component 0 to 3, got -1"},
		{"negative run index", `"index": 5,`, `"index": -5,`, "f.json:25:20: scenarios[0].runs[0].index: expected a run index from 0 to 99999, got -5"},
		{"run index past the planned", `"state_dim": 4,`, `"state_dim": 4, "runs_planned": 5,`, "scenarios[0].runs[0].index: expected a run index from 0 to 4, got 5"},
		{"runs planned huge", `"state_dim": 4,`, `"state_dim": 4, "runs_planned": 1000000000,`, "scenarios[0].runs_planned: expected 0 (unknown) to 100000, got 1000000000"},
		{"gate rule without a test", `"status": "fail",
  "scenarios"`, `"status": "fail", "rules": {"gates": [{"metric": "mean_gospa", "worse": "higher"}]},
  "scenarios"`, `rules.gates[0]: expected "limit", "paired" or both`},
		{"gate rule worse sideways", `"status": "fail",
  "scenarios"`, `"status": "fail", "rules": {"gates": [{"metric": "mean_gospa", "worse": "sideways", "limit": 1}]},
  "scenarios"`, `rules.gates[0].worse: expected "higher" or "lower", got "sideways"`},
		{"gate rule NaN limit", `"status": "fail",
  "scenarios"`, `"status": "fail", "rules": {"gates": [{"metric": "mean_gospa", "worse": "higher", "limit": "NaN"}]},
  "scenarios"`, `rules.gates[0].limit: expected a finite limit, got NaN`},
		{"gate rule confidence 1", `"status": "fail",
  "scenarios"`, `"status": "fail", "rules": {"gates": [{"metric": "id_switches", "worse": "higher", "paired": {"confidence": 1, "min_effect": 0}}]},
  "scenarios"`, `rules.gates[0].paired.confidence: expected a confidence level in (0, 1), got 1`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := result.Unmarshal("f.json", mutate(t, tt.old, tt.new))
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error = %v, want it to contain %q", err, tt.want)
			}
		})
	}
	// A scenario that did not load has no runs and no dimensions.
	ok := `{"version": 1, "status": "error", "scenarios": [{"name": "x", "status": "error", "state_dim": 0, "meas_dim": 0, "runs": null}]}`
	if _, err := result.Unmarshal("f.json", []byte(ok)); err != nil {
		t.Errorf("a scenario without runs or dimensions: %v", err)
	}
}

// TestMergeShardTotalBeyondResults: a shard total larger than the number
// of results given is reported before anything is sized by it.
func TestMergeShardTotalBeyondResults(t *testing.T) {
	for _, total := range []int{2, 1_000_000_000, 1 << 62} {
		s := &result.Suite{Version: result.Version, Status: result.Pass, Shard: &result.Shard{Index: 0, Total: total}}
		_, err := result.Merge(s)
		if err == nil || !strings.Contains(err.Error(), "shards missing") {
			t.Errorf("total %d: error %v, want shards missing", total, err)
		}
	}
}

// TestMergeKeepsAgreedRules: the merged suite keeps the gate rules the
// shards agree on, and shards that disagree do not merge.
func TestMergeKeepsAgreedRules(t *testing.T) {
	limit := 2.5
	rules := func() *result.Rules {
		return &result.Rules{Gates: []result.GateRule{{Metric: "mean_gospa", Worse: "higher", Limit: &limit}}}
	}
	shardOf := func(k int, r *result.Rules) *result.Suite {
		return &result.Suite{Version: result.Version, Status: result.Pass, Shard: &result.Shard{Index: k, Total: 2}, Rules: r}
	}
	m, err := result.Merge(shardOf(0, rules()), shardOf(1, rules()))
	if err != nil || !m.Rules.Equal(rules()) {
		t.Fatalf("merge of agreeing shards: %v, rules %v", err, m.Rules)
	}
	other := rules()
	other.Gates[0].Worse = "lower"
	for name, r := range map[string]*result.Rules{"different": other, "none recorded": nil, "no gates": {}} {
		_, err := result.Merge(shardOf(0, rules()), shardOf(1, r))
		if err == nil || !strings.Contains(err.Error(), "all shards must run with the same gates") {
			t.Errorf("%s: error %v, want a disagreement", name, err)
		}
	}
}
