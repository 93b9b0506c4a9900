package runner

import (
	"bytes"
	"fmt"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/result"
	"trackgate/harness/shard"
)

// gatedConfig returns project settings with an absolute and a paired gate
// on every scenario, so that scenario summaries and gate decisions are
// part of the result.
func gatedConfig() config.Config {
	limit := 50.0
	return config.Config{Gates: []config.Gate{
		{Metric: MetricMeanGOSPA, Paired: &config.Paired{Confidence: 0.95, MinEffect: 0.5}},
		{Metric: MetricMeanNEES, Limit: &limit},
		{Metric: MetricNEESInBand, LowerIsWorse: true, Limit: new(float64)},
	}}
}

// TestRunShardsMergeToTheSameBytes: the runs of a suite split run by run
// (harness/shard, not whole scenarios) over three shards, each written and
// read back as a result file, merged and judged again, give the unsharded
// result byte for byte, scenario summaries and gates included.
func TestRunShardsMergeToTheSameBytes(t *testing.T) {
	files := []string{scenarioFile("crossing-harbour-vessels"), scenarioFile("dropout-quay-lidar")}
	cfg := gatedConfig()
	run := func(sp shard.Spec) *result.Suite {
		o := variantOptions("relabel", files...)
		o.Config.Gates = cfg.Gates
		o.Against, o.Runs, o.Shard = AgainstReference, 5, sp
		return checkOf(t, o)
	}
	full := run(shard.All)
	want, err := result.Marshal(full)
	if err != nil {
		t.Fatal(err)
	}
	for _, sc := range full.Scenarios {
		if sc.Metrics == nil || len(sc.Gates) != 3 {
			t.Fatalf("unsharded scenario %s: metrics %v, %d gates; want a summary and 3 gates", sc.Name, sc.Metrics != nil, len(sc.Gates))
		}
		if len(sc.Metrics.NEES) == 0 {
			t.Fatalf("unsharded scenario %s has no NEES summary", sc.Name)
		}
	}
	const total = 3
	var parts []*result.Suite
	for i := 0; i < total; i++ {
		s := run(shard.Spec{Index: i, Total: total})
		for _, sc := range s.Scenarios {
			if len(sc.Runs) == sc.RunsPlanned {
				t.Fatalf("shard %d holds all runs of %s; the test needs every scenario split", i, sc.Name)
			}
			if sc.Metrics != nil || sc.Gates != nil {
				t.Errorf("shard %d judged %s on part of its runs", i, sc.Name)
			}
		}
		data, err := result.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		back, err := result.Unmarshal(fmt.Sprintf("shard-%d.json", i), data)
		if err != nil {
			t.Fatal(err)
		}
		parts = append(parts, back)
	}
	// Merge in another order than the shard indices.
	merged, err := result.Merge(parts[2], parts[0], parts[1])
	if err != nil {
		t.Fatal(err)
	}
	if err := Judge(merged, cfg); err != nil {
		t.Fatal(err)
	}
	got, err := result.Marshal(merged)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("merged shards differ from the unsharded result:\n%s", firstDifference(want, got))
	}
}

// firstDifference shows the first line where two results differ.
func firstDifference(want, got []byte) string {
	wl, gl := bytes.Split(want, []byte("\n")), bytes.Split(got, []byte("\n"))
	for i := 0; i < min(len(wl), len(gl)); i++ {
		if !bytes.Equal(wl[i], gl[i]) {
			return fmt.Sprintf("line %d:\n want %s\n got  %s", i+1, wl[i], gl[i])
		}
	}
	return fmt.Sprintf("%d lines, want %d", len(gl), len(wl))
}

// TestJudgeLeavesOldResultsAlone: a scenario whose runs carry metrics but
// no values (a result written before runs carried them) keeps its summary
// and gates; a scenario with runs missing is not judged.
func TestJudgeLeavesOldResultsAlone(t *testing.T) {
	gate := result.Gate{Name: "mean_gospa paired", Status: result.Fail}
	s := &result.Suite{Status: result.Fail, Scenarios: []result.Scenario{
		{Name: "old", RunsPlanned: 1, Status: result.Fail, Gates: []result.Gate{gate},
			Runs: []result.Run{{Status: result.Pass, Metrics: &result.RunMetrics{GOSPA: []float64{1}}}}},
		{Name: "part", RunsPlanned: 2, Status: result.Pass,
			Runs: []result.Run{{Status: result.Pass, Metrics: &result.RunMetrics{GOSPA: []float64{1}}, Values: []result.Value{{Metric: MetricMeanGOSPA, Value: 1}}}}},
	}}
	if err := Judge(s, gatedConfig()); err != nil {
		t.Fatal(err)
	}
	if s.Status != result.Fail || len(s.Scenarios[0].Gates) != 1 || s.Scenarios[1].Metrics != nil {
		t.Errorf("Judge changed what it cannot recompute: %+v", s)
	}
	if err := Judge(s, config.Config{Gates: []config.Gate{{Metric: "speed"}}}); err == nil {
		t.Error("a gate on an unknown metric was accepted")
	}
}

// TestJudgeGatesFromValues: the gates read the runs' stored values, the
// blessed ones when at least two runs carry them; hand-computed cases.
func TestJudgeGatesFromValues(t *testing.T) {
	mk := func(vals, ref, blessed []float64) result.Scenario {
		sc := result.Scenario{Name: "s", StateDim: 2, RunsPlanned: len(vals)}
		for i, v := range vals {
			r := result.Run{Index: i, Status: result.Pass, Metrics: &result.RunMetrics{MeanGOSPA: v},
				Values: []result.Value{{Metric: MetricMeanGOSPA, Value: v}}}
			if ref != nil {
				r.ReferenceValues = []result.Value{{Metric: MetricMeanGOSPA, Value: ref[i]}}
			}
			if blessed != nil {
				r.BlessedValues = []result.Value{{Metric: MetricMeanGOSPA, Value: blessed[i]}}
			}
			sc.Runs = append(sc.Runs, r)
		}
		return sc
	}
	limit := 2.0
	cfg := config.Config{Gates: []config.Gate{
		{Metric: MetricGOSPAStep, Limit: &limit},
		{Metric: MetricMeanGOSPA, Paired: &config.Paired{Confidence: 0.95}},
	}}
	for _, tt := range []struct {
		name          string
		sc            result.Scenario
		limit, paired result.Status
		base          string
	}{
		// Mean 1.5 ≤ 2; differences to the reference 0.5, 0.5, 0.6, 0.4
		// (mean 0.5, s = 0.0816, t_{3,0.975} = 3.182: L = 0.37 > 0).
		// Student's t quantile from memory, checked by metrics' own tests.
		{"worse than the reference", mk([]float64{1, 2, 1.6, 1.4}, []float64{0.5, 1.5, 1, 1}, nil), result.Pass, result.Fail, "the reference"},
		// Same values as blessed: differences all 0, never a failure.
		{"same as blessed", mk([]float64{3, 2, 3, 2}, []float64{0, 0, 0, 0}, []float64{3, 2, 3, 2}), result.Fail, result.Pass, "the blessed metrics"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			s := &result.Suite{Scenarios: []result.Scenario{tt.sc}}
			if err := Judge(s, cfg); err != nil {
				t.Fatal(err)
			}
			g := s.Scenarios[0].Gates
			if len(g) != 2 || g[0].Status != tt.limit || g[1].Status != tt.paired {
				t.Fatalf("gates %+v, want limit %s and paired %s", g, tt.limit, tt.paired)
			}
			if !bytes.Contains([]byte(g[1].Message), []byte(tt.base)) {
				t.Errorf("paired gate message %q does not name %s", g[1].Message, tt.base)
			}
			if s.Status != result.Worst(tt.limit, tt.paired) {
				t.Errorf("suite status %s", s.Status)
			}
		})
	}
}
