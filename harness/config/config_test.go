package config

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/compare"
)

func ptr[T any](v T) *T { return &v }

func TestLoadFixture(t *testing.T) {
	path := filepath.Join("testdata", "trackgate.yaml")
	got, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	want := Config{
		File: path,
		Tracker: Tracker{
			Name:    "quay-tracker",
			Command: []string{"./bin/quay", "--jsonl", "--gate=0.99"},
			Env:     map[string]string{"QUAY_LOG": "warn", "QUAY_THREADS": "1"},
			Dir:     "build", StartTimeout: 15 * time.Second, StepTimeout: 250 * time.Millisecond,
			RunTimeout: 2 * time.Minute, Batch: true,
		},
		Scenarios: []string{"scenarios/harbour_*.yaml", "scenarios/breakwater_*.yaml"},
		GoldenDir: "blessed",
		Tolerance: Tolerance{Profile: "float64-port", Mean: RulePatch{Abs: ptr(1e-6)}, Cov: RulePatch{Rel: ptr(1e-8), ULPs: ptr(uint64(16))}},
		TieMargin: 1e-9,
		PerScenario: []Override{
			{Match: "harbour-fog*", Line: 25, Col: 12, Tolerance: &Tolerance{Profile: "float32-port", Metric: RulePatch{Rel: ptr(0.001)}}, TieMargin: ptr(0.5)},
			{Match: "*-night", Line: 30, Col: 12, Tolerance: &Tolerance{Mean: RulePatch{Abs: ptr(0.01)}}},
		},
		Gates: []Gate{
			{Metric: "gospa", Limit: ptr(12.5)},
			{Metric: "detection_rate", LowerIsWorse: true, Limit: ptr(0.9), Paired: &Paired{Confidence: 0.95, MinEffect: 0.02}},
		},
	}
	if diff := cmp.Diff(want, got); diff != "" {
		t.Errorf("Load(%s) (-want +got):\n%s", path, diff)
	}
	if env := got.Tracker.Environ(); strings.Join(env, " ") != "QUAY_LOG=warn QUAY_THREADS=1" {
		t.Errorf("Environ() = %v", env)
	}
	if r := got.Resolve("blessed"); r != filepath.Join("testdata", "blessed") {
		t.Errorf("Resolve = %q", r)
	}
}

func TestFor(t *testing.T) {
	c, err := Load(filepath.Join("testdata", "trackgate.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	f64, f32 := compare.Float64Port(), compare.Float32Port()
	base := f64
	base.Mean.Abs = 1e-6
	base.Cov.Rel, base.Cov.ULPs = 1e-8, 16
	fog := f32
	fog.Metric.Rel = 0.001
	night := base
	night.Mean.Abs = 0.01
	fogNight := fog
	fogNight.Mean.Abs = 0.01
	tests := []struct {
		scenario string
		profile  compare.Profile
		margin   float64
		reason   string
	}{
		{"harbour-calm", base, 1e-9, "project-wide patches only"},
		{"harbour-fog-dawn", fog, 0.5, "a profile in an override starts again from it"},
		{"breakwater-night", night, 1e-9, "patch on top of the project-wide ones"},
		{"harbour-fog-night", fogNight, 0.5, "both overrides, in file order"},
	}
	for _, tt := range tests {
		p, m := c.For(tt.scenario)
		if diff := cmp.Diff(tt.profile, p); diff != "" || m != tt.margin {
			t.Errorf("For(%q) margin %v, want %v; profile (-want +got):\n%s (%s)", tt.scenario, m, tt.margin, diff, tt.reason)
		}
	}
}

func TestDefaults(t *testing.T) {
	missing, err := Load(filepath.Join(t.TempDir(), "trackgate.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(Default(), missing); diff != "" {
		t.Errorf("Load(missing) (-default +got):\n%s", diff)
	}
	for _, src := range []string{"", "# nothing yet\n", "---\n", "~\n"} {
		c, err := Parse("p.yaml", []byte(src))
		if err != nil {
			t.Fatalf("Parse(%q): %v", src, err)
		}
		c.File = ""
		if diff := cmp.Diff(Default(), c); diff != "" {
			t.Errorf("Parse(%q) (-default +got):\n%s", src, diff)
		}
	}
	var zero Config
	if diff := cmp.Diff(Default(), zero.Resolved()); diff != "" {
		t.Errorf("zero Config resolved (-default +got):\n%s", diff)
	}
	if p, m := zero.For("anything"); p != compare.Float64Port() || m != 0 {
		t.Errorf("zero Config For = %v, %v", p, m)
	}
	// The documented defaults, restated by hand.
	d := Default()
	if d.GoldenDir != "golden" || d.Scenarios[0] != "scenarios/*.yaml" || d.Tracker.StepTimeout != 5*time.Second ||
		d.Tracker.StartTimeout != 10*time.Second || d.Tracker.RunTimeout != 10*time.Minute || d.Tolerance.Profile != "float64-port" || d.Tracker.Name != "tracker" {
		t.Errorf("Default() = %+v", d)
	}
}

func TestParseErrors(t *testing.T) {
	tests := []struct {
		name, src, want string
	}{
		{"unknown top key", "golden_dr: g\n", `p.yaml:1:1: unknown key "golden_dr"; did you mean "golden_dir"?`},
		{"unknown far key", "colour: red\n", `p.yaml:1:1: unknown key "colour"; expected one of format, tracker`},
		{"not a mapping", "- a\n", `p.yaml:1:1: expected a mapping with keys format, tracker`},
		{"format", "format: 2\n", `p.yaml:1:9: format: expected format version 1, got 2`},
		{"command type", "tracker:\n  command: ./run.sh\n", `p.yaml:2:12: tracker.command: expected a list of a command-line argument, got "./run.sh"`},
		{"command empty", "tracker:\n  command: []\n", `p.yaml:2:12: tracker.command: expected the program and its arguments, got an empty list`},
		{"command arg type", "tracker:\n  command: [run, {a: 1}]\n", `p.yaml:2:18: tracker.command[1]: expected a command-line argument, got a mapping`},
		{"timeout", "tracker:\n  timeouts:\n    step: soon\n", `p.yaml:3:11: tracker.timeouts.step: expected a positive duration such as "2s" or "1m30s", got "soon"`},
		{"timeout number", "tracker:\n  timeouts: {run: 30}\n", `p.yaml:2:19: tracker.timeouts.run: expected a positive duration`},
		{"negative timeout", "tracker:\n  timeouts: {start: -1s}\n", `tracker.timeouts.start: expected a positive duration`},
		{"timeout key", "tracker:\n  timeouts: {stpe: 1s}\n", `p.yaml:2:14: tracker.timeouts: unknown key "stpe"; did you mean "step"?`},
		{"batch", "tracker: {batch: sometimes}\n", `p.yaml:1:18: tracker.batch: expected true or false, got "sometimes"`},
		{"tracker name", "tracker: {name: ../x}\n", `tracker.name: expected a name of letters`},
		{"env list", "tracker: {env: [A=1]}\n", `p.yaml:1:16: tracker.env: expected a mapping of variable names to values, got a list`},
		{"env name", "tracker:\n  env: {\"A=B\": 1}\n", `p.yaml:2:9: tracker.env.A=B: expected a variable name without '='`},
		{"duplicate key", "golden_dir: a\ngolden_dir: b\n", `golden_dir`},
		{"profile", "tolerance: {profile: loose}\n", `p.yaml:1:22: tolerance.profile: expected one of bit-exact, float64-port, float32-port, got "loose"`},
		{"negative abs", "tolerance:\n  mean: {abs: -1}\n", `p.yaml:2:15: tolerance.mean.abs: expected a finite tolerance ≥ 0, got -1`},
		{"nan rel", "tolerance:\n  cov: {rel: .nan}\n", `tolerance.cov.rel: expected a finite tolerance ≥ 0, got .nan`},
		{"inf rel", "tolerance:\n  cov: {rel: .inf}\n", `tolerance.cov.rel: expected a finite tolerance ≥ 0, got .inf`},
		{"huge abs", "tolerance:\n  cov: {abs: 1e400}\n", `tolerance.cov.abs: expected a finite tolerance ≥ 0, got "1e400"`},
		{"ulps float", "tolerance:\n  metric: {ulps: 1.5}\n", `p.yaml:2:18: tolerance.metric.ulps: expected a whole number of ULPs ≥ 0, got "1.5"`},
		{"ulps negative", "tolerance:\n  metric: {ulps: -3}\n", `tolerance.metric.ulps: expected a whole number of ULPs ≥ 0, got "-3"`},
		{"rule key", "tolerance:\n  mean: {absolute: 1}\n", `p.yaml:2:10: tolerance.mean: unknown key "absolute"`},
		{"tie margin", "tie_margin: -0.1\n", `p.yaml:1:13: tie_margin: expected a finite cost margin ≥ 0, got -0.1`},
		{"tie margin string", "tie_margin: small\n", `p.yaml:1:13: tie_margin: expected a finite cost margin ≥ 0, got "small"`},
		{"override match", "per_scenario:\n  - tie_margin: 1\n", `p.yaml:2:5: per_scenario[0]: missing key "match"`},
		{"override bad pattern", "per_scenario:\n  - {match: \"[\", tie_margin: 1}\n", `p.yaml:2:13: per_scenario[0].match: expected a pattern on scenario names, got "["`},
		{"override underscore", "per_scenario:\n  - {match: \"clutter_*\", tie_margin: 1}\n", `p.yaml:2:13: per_scenario[0].match: pattern "clutter_*" can never match a scenario name`},
		{"override capitals", "per_scenario:\n  - match: Quay*\n    tie_margin: 1\n", `p.yaml:2:12: per_scenario[0].match: pattern "Quay*" can never match a scenario name`},
		{"override empty", "per_scenario:\n  - {match: x}\n", `per_scenario[0]: an override needs "tolerance", "tie_margin" or "golden_runs"`},
		{"scenarios glob", "scenarios: [\"a[\"]\n", `p.yaml:1:13: scenarios[0]: expected a file glob, got "a["`},
		{"scenarios type", "scenarios: all\n", `p.yaml:1:12: scenarios: expected a list of a file glob, got "all"`},
		{"gate metric", "gates:\n  - limit: 3\n", `p.yaml:2:5: gates[0]: missing key "metric"`},
		{"gate nothing", "gates:\n  - metric: gospa\n", `gates[0]: a gate needs "limit", "paired" or both`},
		{"gate worse", "gates:\n  - {metric: gospa, worse: bigger, limit: 1}\n", `p.yaml:2:28: gates[0].worse: expected "higher" or "lower", got "bigger"`},
		{"gate confidence", "gates:\n  - metric: nees\n    paired: {confidence: 1}\n", `p.yaml:3:26: gates[0].paired.confidence: expected a confidence level in (0, 1), got 1`},
		{"gate confidence missing", "gates:\n  - metric: nees\n    paired: {min_effect: 1}\n", `p.yaml:3:13: gates[0].paired: missing key "confidence"`},
		{"gate effect", "gates:\n  - metric: nees\n    paired: {confidence: 0.9, min_effect: -1}\n", `gates[0].paired.min_effect: expected a finite effect size ≥ 0, got -1`},
		{"alias", "golden_dir: &g golden\ntracker:\n  dir: *g\n", `p.yaml:3:8: tracker.dir: YAML aliases (*g) are not supported`},
		{"merge", "tracker:\n  <<: {name: a}\n", `p.yaml:2:3: tracker: YAML merge keys (<<) are not supported`},
		{"syntax", "tracker: [\n", `p.yaml:1: invalid YAML:`},
		{"two documents", "golden_dir: a\n---\ngolden_dir: b\n", `p.yaml:2:1: a second YAML document`},
		{"tab indent", "tracker:\n\tname: a\n", `p.yaml:2: invalid YAML:`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := Parse("p.yaml", []byte(tt.src))
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("Parse(%q) error = %v, want it to contain %q", tt.src, err, tt.want)
			}
			var list ErrorList
			if err != nil && !errors.As(err, &list) {
				t.Errorf("error is %T, want ErrorList", err)
			}
		})
	}
}

func TestSeveralErrorsSorted(t *testing.T) {
	src := "tie_margin: -1\ntracker:\n  batch: 3\ngates: 7\n"
	_, err := Parse("p.yaml", []byte(src))
	var list ErrorList
	if !errors.As(err, &list) || len(list) != 3 {
		t.Fatalf("Parse error = %v, want 3 errors", err)
	}
	for i, line := range []int{1, 3, 4} {
		if list[i].Line != line {
			t.Errorf("error %d at line %d, want %d: %v", i, list[i].Line, line, list[i])
		}
	}
}

func TestLoadUnreadable(t *testing.T) {
	dir := t.TempDir()
	if _, err := Load(dir); err == nil { // a folder, not a file
		t.Error("Load(folder) succeeded")
	}
	p := filepath.Join(dir, "trackgate.yaml")
	os.WriteFile(p, []byte("golden_dir: [x]\n"), 0o644)
	if _, err := Load(p); err == nil || !strings.HasPrefix(err.Error(), p+":1:13: golden_dir:") {
		t.Errorf("Load error = %v", err)
	}
}

func FuzzParse(f *testing.F) {
	raw, _ := os.ReadFile(filepath.Join("testdata", "trackgate.yaml"))
	f.Add(raw)
	f.Add([]byte("tracker: {command: [a], timeouts: {step: 1s}}\ngates: [{metric: m, limit: 1}]\n"))
	f.Add([]byte("per_scenario: [{match: '*', tolerance: {profile: bit-exact, mean: {ulps: 3}}}]\n"))
	f.Add([]byte("a: &x [*x]\n"))
	f.Add([]byte("per_scenario: [{match: 'quay-[^0-9]*-?', tie_margin: 1}, {match: '[\\-]*', tie_margin: 2}]\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, err := Parse("fz.yaml", data)
		if err != nil {
			var list ErrorList
			if !errors.As(err, &list) || len(list) == 0 {
				t.Fatalf("error %T without positions: %v", err, err)
			}
			for _, e := range list {
				if e.File != "fz.yaml" || e.Msg == "" {
					t.Fatalf("malformed error %+v", e)
				}
			}
			return
		}
		// Whatever parses yields valid rules for any scenario.
		for _, name := range []string{"harbour-calm", "x"} {
			p, m := c.For(name)
			for _, r := range []compare.Rule{p.Mean, p.Cov, p.Metric} {
				if r.Valid() != nil {
					t.Fatalf("For(%q) gave invalid rule %v", name, r)
				}
			}
			if !(m >= 0) {
				t.Fatalf("For(%q) margin %v", name, m)
			}
		}
		c2, err := Parse("fz.yaml", data)
		if err != nil || !cmpEqual(c, c2) {
			t.Fatalf("second parse differs")
		}
	})
}

func cmpEqual(a, b Config) bool { return cmp.Equal(a, b) }

func BenchmarkParse(b *testing.B) {
	raw, _ := os.ReadFile(filepath.Join("testdata", "trackgate.yaml"))
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Parse("trackgate.yaml", raw); err != nil {
			b.Fatal(err)
		}
	}
}
