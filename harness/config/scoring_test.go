package config

import (
	"strings"
	"testing"
)

// TestScoringAndGoldenRuns: the metrics section and the golden run counts,
// project-wide and per scenario, with the last matching override winning.
func TestScoringAndGoldenRuns(t *testing.T) {
	src := `golden_runs: 4
metrics: {order: 1, cutoff: 35.5}
per_scenario:
  - match: "harbour-*"
    golden_runs: 6
  - match: "harbour-fog"
    golden_runs: 2
    tie_margin: 0.1
`
	c, err := Parse("p.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	if c.Scoring != (Scoring{Order: 1, Cutoff: 35.5}) || c.GoldenRuns != 4 {
		t.Errorf("scoring %+v, golden runs %d", c.Scoring, c.GoldenRuns)
	}
	for name, want := range map[string]int{"harbour-pier": 6, "harbour-fog": 2, "canal-lock": 4} {
		if got := c.GoldenRunsFor(name); got != want {
			t.Errorf("GoldenRunsFor(%q) = %d, want %d", name, got, want)
		}
	}
	if got := (Config{}).GoldenRunsFor("canal-lock"); got != 0 {
		t.Errorf("zero Config: GoldenRunsFor = %d, want 0 (the runner's default)", got)
	}
	for _, tt := range []struct{ src, want string }{
		{"metrics: {order: 0.5}\n", "p.yaml:1:18: metrics.order: expected a GOSPA order ≥ 1, got 0.5"},
		{"metrics: {cutoff: 0}\n", "p.yaml:1:19: metrics.cutoff: expected a cut-off in metres > 0, got 0"},
		{"metrics: {cut_off: 3}\n", `p.yaml:1:11: metrics: unknown key "cut_off"; did you mean "cutoff"?`},
		{"golden_runs: 0\n", "p.yaml:1:14: golden_runs: expected a whole number of runs from 1 to 1000, got 0"},
		{"golden_runs: 2.5\n", `p.yaml:1:14: golden_runs: expected a whole number of runs from 1 to 1000, got "2.5"`},
		{"per_scenario:\n  - {match: a-*, golden_runs: many}\n", `p.yaml:2:31: per_scenario[0].golden_runs: expected a whole number of runs from 1 to 1000, got "many"`},
	} {
		_, err := Parse("p.yaml", []byte(tt.src))
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("Parse(%q) error = %v, want it to contain %q", tt.src, err, tt.want)
		}
	}
}
