package config

import (
	"errors"
	"io/fs"
	"os"
	"path"
	"path/filepath"
	"sort"
	"time"

	"trackgate/harness/compare"
)

// FormatVersion is the project file format this package reads.
const FormatVersion = 1

// FileName is the project file's conventional name.
const FileName = "trackgate.yaml"

// Defaults of the fields whose zero value means "default".
const (
	DefaultTrackerName  = "tracker"
	DefaultGoldenDir    = "golden"
	DefaultScenarioGlob = "scenarios/*.yaml"
	DefaultStartTimeout = 10 * time.Second
	DefaultStepTimeout  = 5 * time.Second
	DefaultRunTimeout   = 10 * time.Minute
)

// Config is a loaded project file. The zero value is the default project:
// no tracker, scenarios/*.yaml, goldens in golden/, the float64-port
// profile, no tie margin, no gates.
type Config struct {
	// File is the path the file was read from; "" for defaults.
	File    string
	Tracker Tracker
	// Scenarios are filepath.Match globs; nil means DefaultScenarioGlob.
	Scenarios []string
	// GoldenDir is the golden folder; "" means DefaultGoldenDir.
	GoldenDir string
	Tolerance Tolerance
	// TieMargin is the association cost margin below which a changed
	// association counts as a tie rather than a regression. ≥ 0.
	TieMargin float64
	// PerScenario are applied in order to scenarios whose name matches.
	PerScenario []Override
	Gates       []Gate
	// Scoring sets the metrics' parameters.
	Scoring Scoring
	// GoldenRuns is the number of leading runs of each scenario that have
	// golden files; 0 means the runner's default (3).
	GoldenRuns int
}

// Scoring holds the parameters of the metrics (the "metrics" section).
type Scoring struct {
	// Order is the GOSPA order p ≥ 1; 0 means 2.
	Order float64
	// Cutoff is the GOSPA cut-off c in metres, also the farthest a track
	// may be from an object it follows; 0 means the runner's default.
	Cutoff float64
}

// Tracker is how to start and drive the tracker under test.
type Tracker struct {
	// Name names the tracker's golden folder; "" means DefaultTrackerName.
	Name string
	// Command is the argument vector (no shell); nil means no tracker is
	// configured and only the reference runs.
	Command []string
	// Env holds variables added to trackgate's own environment.
	Env map[string]string
	// Dir is the working folder; "" means the project file's folder.
	Dir string
	// Timeouts; zero means the default.
	StartTimeout, StepTimeout, RunTimeout time.Duration
	// Batch sends a whole run at once and then reads every frame, instead
	// of one scan and one frame at a time.
	Batch bool
}

// RulePatch replaces the fields of a compare.Rule that it sets.
type RulePatch struct {
	Abs, Rel *float64
	ULPs     *uint64
}

// Apply returns r with the fields p sets replaced.
func (p RulePatch) Apply(r compare.Rule) compare.Rule {
	if p.Abs != nil {
		r.Abs = *p.Abs
	}
	if p.Rel != nil {
		r.Rel = *p.Rel
	}
	if p.ULPs != nil {
		r.ULPs = *p.ULPs
	}
	return r
}

// Tolerance names a profile and patches its rules.
type Tolerance struct {
	// Profile names a built-in profile (compare.Lookup); "" means
	// compare.Float64PortName.
	Profile string
	// Patches per quantity.
	Mean, Cov, Metric RulePatch
}

// Override adjusts settings for the scenarios whose name matches.
type Override struct {
	// Match is a path.Match pattern on the scenario name. Parse accepts
	// only patterns that can match a valid scenario name (lower-case
	// letters and digits in words joined by single '-', at most 64
	// characters), so "clutter-*" but not "clutter_*".
	Match string
	// Line and Col locate Match in the project file (1-based); both are 0
	// for an override built in code.
	Line, Col int
	// Tolerance, if set, patches the rules in force. When its Profile is
	// not "" it first starts again from that profile, dropping the patches
	// made before it.
	Tolerance *Tolerance
	// TieMargin, if set, replaces the project-wide margin.
	TieMargin *float64
	// GoldenRuns, if set, replaces the project-wide golden run count.
	GoldenRuns *int
}

// Gate is a pass/fail rule on one metric.
type Gate struct {
	Metric string
	// LowerIsWorse is true for metrics where smaller values are worse
	// (worse: lower); by default larger values are worse.
	LowerIsWorse bool
	// Limit, if set, fails a run whose value is worse than it.
	Limit *float64
	// Paired, if set, fails when the tracker is worse than the reference
	// over the runs of a scenario.
	Paired *Paired
}

// Paired is a paired comparison gate.
type Paired struct {
	// Confidence c in (0, 1) is the one-sided confidence that the tracker is
	// worse before the gate fails: the gate fails when the one-sided lower
	// confidence bound at level c of the mean worsening exceeds
	// max(0, MinEffect), that is, when the one-sided test of "no worse than
	// MinEffect" rejects at level 1 − c (see metrics.Paired). 0.95 is a
	// 5% one-sided test, not the lower end of a two-sided 95% interval.
	Confidence float64
	// MinEffect is the smallest mean difference that can fail the gate.
	MinEffect float64
}

// Default returns the default project with every default spelled out.
func Default() Config {
	return Config{
		Tracker: Tracker{Name: DefaultTrackerName, StartTimeout: DefaultStartTimeout,
			StepTimeout: DefaultStepTimeout, RunTimeout: DefaultRunTimeout},
		Scenarios: []string{DefaultScenarioGlob},
		GoldenDir: DefaultGoldenDir,
		Tolerance: Tolerance{Profile: compare.Float64PortName},
	}
}

// withDefaults fills the zero fields that mean "default".
func (c Config) withDefaults() Config {
	d := Default()
	if c.Tracker.Name == "" {
		c.Tracker.Name = d.Tracker.Name
	}
	if c.Tracker.StartTimeout == 0 {
		c.Tracker.StartTimeout = d.Tracker.StartTimeout
	}
	if c.Tracker.StepTimeout == 0 {
		c.Tracker.StepTimeout = d.Tracker.StepTimeout
	}
	if c.Tracker.RunTimeout == 0 {
		c.Tracker.RunTimeout = d.Tracker.RunTimeout
	}
	if c.Scenarios == nil {
		c.Scenarios = d.Scenarios
	}
	if c.GoldenDir == "" {
		c.GoldenDir = d.GoldenDir
	}
	if c.Tolerance.Profile == "" {
		c.Tolerance.Profile = d.Tolerance.Profile
	}
	return c
}

// Resolved returns c with every zero field that means "default" filled in.
func (c Config) Resolved() Config { return c.withDefaults() }

// Resolve returns p relative to the project file's folder (unchanged when
// absolute or when c has no file).
func (c Config) Resolve(p string) string {
	if filepath.IsAbs(p) || c.File == "" {
		return p
	}
	return filepath.Join(filepath.Dir(c.File), p)
}

// Environ returns the tracker's extra environment as sorted "KEY=value"
// entries.
func (t Tracker) Environ() []string {
	out := make([]string, 0, len(t.Env))
	for k, v := range t.Env {
		out = append(out, k+"="+v)
	}
	sort.Strings(out)
	return out
}

// For returns the settings that apply to the named scenario: the tolerance
// profile (the project-wide profile and patches, then every matching
// override in file order) and the tie margin. Parse accepts only known
// profile names; in a Config built in code an unknown name stands for the
// strictest rules, those of compare.BitExact.
func (c Config) For(scenario string) (compare.Profile, float64) {
	c = c.withDefaults()
	tol := []Tolerance{c.Tolerance}
	margin := c.TieMargin
	for _, o := range c.PerScenario {
		if ok, _ := path.Match(o.Match, scenario); !ok {
			continue
		}
		if o.Tolerance != nil {
			tol = append(tol, *o.Tolerance)
		}
		if o.TieMargin != nil {
			margin = *o.TieMargin
		}
	}
	p, _ := compare.Lookup(c.Tolerance.Profile)
	for _, t := range tol {
		if t.Profile != "" {
			q, _ := compare.Lookup(t.Profile)
			q.Mean, q.Cov, q.Metric = t.Mean.Apply(q.Mean), t.Cov.Apply(q.Cov), t.Metric.Apply(q.Metric)
			p = q
			continue
		}
		p.Mean, p.Cov, p.Metric = t.Mean.Apply(p.Mean), t.Cov.Apply(p.Cov), t.Metric.Apply(p.Metric)
	}
	return p, margin
}

// Load reads the project file at path. A file that does not exist gives
// Default() (with File ""), not an error.
func Load(path string) (Config, error) {
	data, err := os.ReadFile(path)
	if errors.Is(err, fs.ErrNotExist) {
		return Default(), nil
	}
	if err != nil {
		return Config{}, err
	}
	return Parse(path, data)
}

// GoldenRunsFor returns the golden run count for the named scenario: the
// last matching override's, else the project's; 0 means the runner's
// default.
func (c Config) GoldenRunsFor(scenario string) int {
	n := c.GoldenRuns
	for _, o := range c.PerScenario {
		if ok, _ := path.Match(o.Match, scenario); ok && o.GoldenRuns != nil {
			n = *o.GoldenRuns
		}
	}
	return n
}
