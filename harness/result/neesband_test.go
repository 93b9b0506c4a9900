package result_test

import (
	"math"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"trackgate/harness/result"
)

// bandMetrics is a scenario summary with a band for each of its three
// steps; the numbers are invented.
func bandMetrics() *result.Metrics {
	return &result.Metrics{Runs: 4, GOSPA: []float64{1, 2, 3}, MeanGOSPA: 2,
		NEES:           []float64{3.9, 4.4, 4.1},
		NEESSteps:      []int{0, 2, 3},
		NEESLowByStep:  []float64{3.25, 3.46, 3.25},
		NEESHighByStep: []float64{4.82, 4.57, 4.82},
		NEESConfidence: 0.95, NEESInBand: 1}
}

// TestNEESBandsRoundTrip: the per-step bounds and the skipped-sample count
// and the steps of the averages survive Write and Read bit for bit, non-finite bounds included, and the
// written file conforms to schema.json.
func TestNEESBandsRoundTrip(t *testing.T) {
	s := small()
	m := bandMetrics()
	m.NEESHighByStep[1] = math.Inf(1)
	m.NEESLowByStep[2] = math.NaN()
	s.Scenarios[0].Metrics = m
	s.Scenarios[0].Runs[0].Metrics.NEESSkipped = 3
	data, err := result.Marshal(s)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"nees_steps": [`, `"nees_low_by_step": [`, `"nees_high_by_step": [`, `"Infinity"`, `"nees_skipped": 3`} {
		if !strings.Contains(string(data), want) {
			t.Errorf("written file lacks %s", want)
		}
	}
	got, err := result.Unmarshal("band.json", data)
	if err != nil {
		t.Fatal(err)
	}
	if d := cmp.Diff(s, got, cmpopts.EquateNaNs()); d != "" {
		t.Errorf("round trip (-wrote +read):\n%s", d)
	}
	if err := validate(t, compileSchema(t), data); err != nil {
		t.Errorf("written file does not conform to schema.json: %v", err)
	}
	// Without bands or skipped samples the members are left out.
	plain, err := result.Marshal(small())
	if err != nil {
		t.Fatal(err)
	}
	for _, absent := range []string{"by_step", "nees_steps", "nees_skipped"} {
		if strings.Contains(string(plain), absent) {
			t.Errorf("a result without bands writes %q", absent)
		}
	}
}

// TestReadRejectsUnevenNEESBands: per-step bounds that do not pair with
// the NEES series, which a report would index out of range, are rejected
// as the file is read, naming the file, line, column and member.
func TestReadRejectsUnevenNEESBands(t *testing.T) {
	metrics := func(nees, lo, hi string) string {
		return `"state_dim": 4, "metrics": {"runs": 2, "gospa": [1], "mean_gospa": 1, "position_rmse": 0, "id_switches": 0, "false_tracks": 0, "nees": ` +
			nees + lo + hi + `},`
	}
	for _, tt := range []struct {
		name, new, want string
	}{
		// Column 170 is where the value [3] starts on line 19.
		{"short lower", metrics(`[4, 4]`, `, "nees_low_by_step": [3]`, `, "nees_high_by_step": [5, 5]`),
			"f.json:19:170: scenarios[0].metrics.nees_low_by_step: expected one bound per step of nees (2), got 1"},
		{"long upper", metrics(`[4, 4]`, `, "nees_low_by_step": [3, 3]`, `, "nees_high_by_step": [5, 5, 5]`),
			"scenarios[0].metrics.nees_high_by_step: expected one bound per step of nees (2), got 3"},
		{"upper alone", metrics(`[4]`, ``, `, "nees_high_by_step": [5]`),
			"scenarios[0].metrics.nees_low_by_step: expected one bound per step of nees (1), got 0"},
		{"bounds without nees", metrics(`[]`, `, "nees_low_by_step": [3]`, `, "nees_high_by_step": [5]`),
			"scenarios[0].metrics.nees_low_by_step: expected one bound per step of nees (0), got 1"},
	} {
		t.Run(tt.name, func(t *testing.T) {
			_, err := result.Unmarshal("f.json", mutate(t, `"state_dim": 4,`, tt.new))
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error = %v, want it to contain %q", err, tt.want)
			}
		})
	}
	for _, tt := range []struct{ name, steps, want string }{
		{"short", `[0]`, "scenarios[0].metrics.nees_steps: expected one step per entry of nees (2), got 1"},
		{"negative", `[-1, 3]`, "scenarios[0].metrics.nees_steps[0]: expected a step ≥ 0 after the previous one, got -1"},
		{"repeated", `[3, 3]`, "scenarios[0].metrics.nees_steps[1]: expected a step ≥ 0 after the previous one, got 3"},
		{"descending", `[4, 3]`, "scenarios[0].metrics.nees_steps[1]: expected a step ≥ 0 after the previous one, got 3"},
	} {
		t.Run("steps "+tt.name, func(t *testing.T) {
			_, err := result.Unmarshal("f.json", mutate(t, `"state_dim": 4,`, metrics(`[4, 4]`, `, "nees_steps": `+tt.steps, ``)))
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("error = %v, want it to contain %q", err, tt.want)
			}
		})
	}
	ok := metrics(`[4, 4], "nees_steps": [0, 7]`, `, "nees_low_by_step": [3, 3]`, `, "nees_high_by_step": [5, "Infinity"]`)
	if _, err := result.Unmarshal("f.json", mutate(t, `"state_dim": 4,`, ok)); err != nil {
		t.Errorf("paired bounds rejected: %v", err)
	}
}

// TestSchemaRejectsNegativeSkips: the schema admits no negative count of
// skipped NEES samples.
func TestSchemaRejectsNegativeSkips(t *testing.T) {
	sch := compileSchema(t)
	for _, tt := range []struct {
		n    string
		pass bool
	}{{"2", true}, {"-1", false}, {"1.5", false}} {
		data := mutate(t, `"position_rmse": 0
          }`, `"position_rmse": 0, "nees_skipped": `+tt.n+`
          }`)
		if err := validate(t, sch, data); (err == nil) != tt.pass {
			t.Errorf("nees_skipped %s: schema error %v, want accepted %v", tt.n, err, tt.pass)
		}
	}
}

// TestMergeNEESBands: a scenario held whole by one shard keeps its
// per-step bounds, copied rather than shared; a scenario pooled from
// shards has no counts per step and so no per-step bounds.
func TestMergeNEESBands(t *testing.T) {
	a, b := part(0, 2, 0, 1, 2, 3), part(1, 2)
	a.Scenarios[0].Metrics = bandMetrics()
	got, err := result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	m := got.Scenarios[0].Metrics
	if d := cmp.Diff(bandMetrics(), m); d != "" {
		t.Fatalf("whole scenario's metrics (-want +got):\n%s", d)
	}
	m.NEESLowByStep[0], m.NEESHighByStep[0], m.NEESSteps[0] = -1, -1, -1
	if a.Scenarios[0].Metrics.NEESLowByStep[0] != 3.25 || a.Scenarios[0].Metrics.NEESHighByStep[0] != 4.82 || a.Scenarios[0].Metrics.NEESSteps[0] != 0 {
		t.Error("the merged metrics share their per-step bounds with the shard's")
	}

	a, b = part(0, 2, 0, 1), part(1, 2, 2, 3)
	a.Scenarios[0].Metrics, b.Scenarios[0].Metrics = bandMetrics(), bandMetrics()
	a.Scenarios[0].Metrics.Runs, b.Scenarios[0].Metrics.Runs = 2, 2
	got, err = result.Merge(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if m := got.Scenarios[0].Metrics; len(m.NEES) != 3 || m.NEESLowByStep != nil || m.NEESHighByStep != nil || m.NEESSteps != nil {
		t.Errorf("pooled metrics: %d averages, bounds %v and %v, steps %v; want 3 and no bounds or steps", len(m.NEES), m.NEESLowByStep, m.NEESHighByStep, m.NEESSteps)
	}
}
