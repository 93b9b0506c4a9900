package runner

import (
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"time"

	"trackgate/harness/compare"
	"trackgate/harness/config"
	"trackgate/harness/driver"
	"trackgate/harness/golden"
	"trackgate/harness/result"
	"trackgate/harness/shard"
)

// Against says what the tracker is compared with.
type Against string

// The comparison modes.
const (
	AgainstReference Against = "reference"
	AgainstGolden    Against = "golden"
	AgainstBoth      Against = "both"
)

// Defaults of the options whose zero value means "default".
const (
	// DefaultGoldenRuns is G, the number of leading runs of each scenario
	// that have golden files (fewer when the scenario has fewer runs).
	DefaultGoldenRuns = 3
	// DefaultCutoff is the cut-off c, in metres, of GOSPA and of the track
	// alignment: a track farther than c from an object does not follow it.
	// 20 m is a few measurement standard deviations in every stock
	// scenario (common practice: c a few times the localisation error one
	// is willing to call a match).
	DefaultCutoff = 20.0
	// DefaultOrder is the GOSPA order p (α is always 2), the order of
	// Rahmathullah et al.'s examples (FUSION 2017).
	DefaultOrder = 2.0
	// DefaultMaxDiffs caps the differences kept per check.
	DefaultMaxDiffs = 20
	// MaxRuns bounds Options.Runs (--runs): ten times the runs a scenario
	// file may ask for (scenario.MaxRuns). Every run planned keeps its
	// result until the suite is assembled, so the bound keeps a mistyped
	// count from exhausting memory; a result file holds no scenario with
	// more runs (result.MaxRunsPlanned).
	MaxRuns = result.MaxRunsPlanned
)

// Options configure Check, Bless and Explain. The zero value of every field
// but a tracker command has a working default, named in its comment.
type Options struct {
	// Config is the project file (config.Load); the zero Config is the
	// default project with paths relative to the working folder.
	Config config.Config
	// Tracker is the argument vector of the tracker under test; nil means
	// Config.Tracker.Command. One of the two must be set.
	Tracker []string
	// TrackerName names the tracker's golden folder; "" means
	// Config.Tracker.Name (default "tracker").
	TrackerName string
	// Scenarios are scenario files; nil means the Config's globs.
	Scenarios []string
	// Against is what to compare with; "" means AgainstBoth.
	Against Against
	// Runs, when positive, replaces every scenario's run count; at most
	// MaxRuns.
	Runs int
	// Shard selects a share of the (scenario, run) pairs; the zero value
	// means every pair.
	Shard shard.Spec
	// Workers is the number of runs handled at once; < 1 means
	// runtime.NumCPU(). Results do not depend on it: the workers share out
	// whole chunks of RunsPerProcess runs, each served by a tracker
	// process of its own.
	Workers int
	// Profile, if set, names the tolerance profile used instead of the
	// project's (per-scenario overrides still apply on top).
	Profile string
	// GoldenDir replaces Config.GoldenDir when set.
	GoldenDir string
	// GoldenRuns, when positive, is G for every scenario; 0 means the
	// project's (golden_runs, per scenario or project-wide), else
	// DefaultGoldenRuns.
	GoldenRuns int
	// CI forbids writing anything into the golden folder; a missing
	// golden then fails. It is also set when the environment variable CI
	// is "true", "1" or "yes" (see golden.NewPolicy).
	CI bool
	// Getenv reads the environment (nil means os.Getenv).
	Getenv func(string) string
	// Out, if set, is the folder where actual outputs of failing golden
	// comparisons are left, in the golden layout with ".actual" appended.
	Out string
	// Cutoff is the GOSPA and alignment cut-off in metres; 0 means the
	// project's (metrics.cutoff), else DefaultCutoff. The GOSPA order is
	// the project's metrics.order (DefaultOrder when not set).
	Cutoff float64
	// K is the number of hypotheses the reference ranks per scan (0 means
	// tracker.DefaultK).
	K int
	// MaxDiffs caps the differences kept per check (0 means
	// DefaultMaxDiffs).
	MaxDiffs int
	// AllTraces keeps the plot traces of every run; by default only run 0
	// of each scenario and the runs that did not pass carry one.
	AllTraces bool
	// Timing fills result.Run.Seconds (the tracker phase's share per run);
	// leave it off where byte-identical results are wanted.
	Timing bool
	// Tool is written into result.Suite.Tool ("" means "trackgate").
	Tool string
	// Local, if set, is the tracker under test, run in this process
	// instead of a command (Tracker and Config.Tracker are then unused).
	Local *Local
	// Progress, if set, is called as runs of the tracker finish, with the
	// number done and the number to do, from one goroutine at a time. It
	// never affects the result: the runs a tracker process serves are
	// fixed by RunsPerProcess whether progress is reported or not.
	Progress func(done, total int)
}

// settings is Options resolved: every default filled in and checked.
type settings struct {
	Options
	// readOnly keeps every file where it is: set by Explain, which only
	// looks, so no actual output is left even outside CI mode.
	readOnly   bool
	cfg        config.Config
	argv       []string
	name       string
	goldenRoot string
	against    Against
	workers    int
	cutoff     float64
	order      float64
	maxDiffs   int
	gRuns      int
	files      []string
	fromConfig bool // the scenario list came from the project's globs
	drv        driver.Config
	getenv     func(string) string
	tally      *tally // counts finished runs for Options.Progress
}

// resolve checks o and fills in the defaults. needTracker is false for
// Explain, which may run without one.
func resolve(o Options, needTracker bool) (*settings, error) {
	s := &settings{Options: o, cfg: o.Config.Resolved()}
	s.getenv = o.Getenv
	if s.getenv == nil {
		s.getenv = os.Getenv
	}
	s.against = o.Against
	if s.against == "" {
		s.against = AgainstBoth
	}
	switch s.against {
	case AgainstReference, AgainstGolden, AgainstBoth:
	default:
		return nil, fmt.Errorf("against: expected reference, golden or both, got %q", o.Against)
	}
	if o.Profile != "" {
		if _, ok := compare.Lookup(o.Profile); !ok {
			return nil, fmt.Errorf("profile: expected one of %v, got %q", compare.ProfileNames(), o.Profile)
		}
		s.cfg.Tolerance.Profile = o.Profile
	}
	s.argv = o.Tracker
	dir := ""
	if o.Local != nil {
		if o.Local.Begin == nil {
			return nil, fmt.Errorf("local tracker %q: Begin is nil", o.Local.Ready.Name)
		}
		s.argv = nil
	} else if s.argv == nil {
		s.argv = s.cfg.Tracker.Command
		if s.argv != nil {
			dir = s.cfg.Resolve(s.cfg.Tracker.Dir)
		}
	}
	if needTracker && len(s.argv) == 0 && o.Local == nil {
		return nil, fmt.Errorf("no tracker: give a tracker command or set tracker.command in %s", config.FileName)
	}
	if len(s.argv) > 0 && s.argv[0] == "" {
		return nil, fmt.Errorf("tracker command %q: expected a program name as the first word, got an empty word", s.argv)
	}
	s.name = o.TrackerName
	if s.name == "" {
		s.name = s.cfg.Tracker.Name
	}
	if s.name == "" {
		s.name = config.DefaultTrackerName
	}
	s.goldenRoot = s.cfg.Resolve(s.cfg.GoldenDir)
	if o.GoldenDir != "" {
		s.goldenRoot = o.GoldenDir
	}
	s.workers = o.Workers
	if s.workers < 1 {
		s.workers = runtime.NumCPU()
	}
	s.cutoff = o.Cutoff
	if s.cutoff == 0 {
		s.cutoff = s.cfg.Scoring.Cutoff
	}
	if s.cutoff == 0 {
		s.cutoff = DefaultCutoff
	}
	s.order = s.cfg.Scoring.Order
	if s.order == 0 {
		s.order = DefaultOrder
	}
	if !(s.order >= 1) || s.order > 1e6 {
		return nil, fmt.Errorf("metrics.order: expected a GOSPA order ≥ 1, got %g", s.order)
	}
	if !(s.cutoff > 0) || s.cutoff > 1e150 {
		return nil, fmt.Errorf("cutoff: expected a positive number of metres, got %g", o.Cutoff)
	}
	s.maxDiffs = o.MaxDiffs
	if s.maxDiffs <= 0 {
		s.maxDiffs = DefaultMaxDiffs
	}
	s.gRuns = o.GoldenRuns
	if s.gRuns < 0 {
		return nil, fmt.Errorf("golden runs: expected a positive number, got %d", o.GoldenRuns)
	}
	if o.Runs < 0 || o.Runs > MaxRuns {
		return nil, fmt.Errorf("runs: expected a number of runs from 1 to %d (or 0 for each scenario's own), got %d", MaxRuns, o.Runs)
	}
	if o.K < 0 {
		return nil, fmt.Errorf("k: expected a positive number of hypotheses, got %d", o.K)
	}
	if o.Shard == (shard.Spec{}) {
		s.Shard = shard.All
	}
	if !s.Shard.Valid() {
		return nil, fmt.Errorf("shard: expected 0 ≤ index < total, got %d/%d", o.Shard.Index, o.Shard.Total)
	}
	for i, g := range s.cfg.Gates {
		if _, ok := gateMetrics[g.Metric]; !ok {
			return nil, fmt.Errorf("gates[%d].metric: expected one of %v, got %q", i, gateMetricNames(), g.Metric)
		}
	}
	if o.Scenarios != nil {
		s.files = o.Scenarios
	} else {
		s.fromConfig = true
		seen := map[string]bool{}
		for _, g := range s.cfg.Scenarios {
			m, err := filepath.Glob(s.cfg.Resolve(g))
			if err != nil {
				return nil, fmt.Errorf("scenarios: bad pattern %q: %v", g, err)
			}
			sort.Strings(m)
			for _, f := range m {
				if !seen[f] {
					seen[f] = true
					s.files = append(s.files, f)
				}
			}
		}
	}
	if len(s.files) == 0 {
		return nil, fmt.Errorf("no scenario files: the patterns %v match nothing", s.cfg.Scenarios)
	}
	s.drv = driver.Config{
		Argv:         s.argv,
		Env:          s.cfg.Tracker.Environ(),
		Dir:          dir,
		Batch:        s.cfg.Tracker.Batch,
		StartTimeout: s.cfg.Tracker.StartTimeout,
		ReplyTimeout: s.cfg.Tracker.StepTimeout,
		RunTimeout:   s.cfg.Tracker.RunTimeout,
	}
	if s.drv.ReplyTimeout == 0 {
		s.drv.ReplyTimeout = 10 * time.Second
	}
	return s, nil
}

// ci reports whether CI mode is on.
func (s *settings) ci() bool {
	return golden.NewPolicy(golden.Verify, s.CI, s.getenv).CI
}
