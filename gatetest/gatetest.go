package gatetest

import (
	"context"
	"fmt"
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/harness/runner"
	"trackgate/reference/tracker"
)

// Tracker is a tracker under test written in Go.
type Tracker interface {
	// Ready says who the tracker is (name and version, for reports and
	// the golden folder) and which optional fields it reports
	// (covariances, associations); Protocol and ManyRuns are not used.
	Ready() protocol.Ready
	// Begin starts one run from what a subprocess's start message would
	// carry and returns the function answering the run's scans, in step
	// order. Runs may be under way at once on several goroutines (see
	// Options.Workers), so runs must not share unguarded state.
	Begin(protocol.Start) (protocol.StepFunc, error)
}

// Options say what to run the tracker on and what to compare it with.
type Options struct {
	// Scenarios are scenario files or filepath.Match patterns; required.
	Scenarios []string
	// Golden is the golden folder; "" compares with the reference only.
	Golden string
	// Update records the goldens (only those missing, stale or outside
	// their tolerance) before checking, like trackgate bless.
	Update bool
	// Name names the tracker's golden folder; "" means Ready().Name.
	Name string
	// Runs, when positive, replaces every scenario's run count.
	Runs int
	// Workers is the number of runs under way at once; < 1 means 1, so
	// that a tracker with shared state is safe unless the test says
	// otherwise. Results do not depend on it.
	Workers int
	// Config holds the project settings (tolerance profile, tie margin,
	// gates, metric parameters); the zero value is trackgate's defaults.
	Config config.Config
	// Getenv reads the environment (nil means os.Getenv); CI mode follows
	// its CI variable.
	Getenv func(string) string
}

// Check runs the tracker on the scenarios, records the goldens first when
// o.Update is set, and reports through t: every failing run with its first
// divergence, every failing gate, and ties as log lines. It returns the
// result for further inspection (nil when nothing could be run, after
// t.Fatal).
func Check(t testing.TB, tr Tracker, o Options) *result.Suite {
	t.Helper()
	s, notes, err := Run(context.Background(), tr, o)
	for _, n := range notes {
		t.Log(n)
	}
	if err != nil {
		t.Fatalf("trackgate: %v", err)
		return nil
	}
	for _, f := range Failures(s) {
		t.Error(f)
	}
	for _, tie := range Ties(s) {
		t.Log(tie)
	}
	return s
}

// Run is Check without a testing.TB: it blesses when o.Update is set, then
// checks, and returns the result with notes on what blessing wrote. The
// error is for what prevents any run (no scenario, a bad option) and for
// goldens that could not be written.
func Run(ctx context.Context, tr Tracker, o Options) (*result.Suite, []string, error) {
	ro, err := options(tr, o)
	if err != nil {
		return nil, nil, err
	}
	var notes []string
	if o.Update {
		if o.Golden == "" {
			return nil, nil, fmt.Errorf("update: no golden folder given (Options.Golden)")
		}
		rep, err := runner.Bless(ctx, runner.BlessOptions{Options: ro})
		if err != nil {
			return nil, nil, err
		}
		notes = append(notes, fmt.Sprintf("goldens in %s: %d written, %d new, %d unchanged within tolerance",
			rep.Root, len(rep.Written), len(rep.New), len(rep.Unchanged)))
		if rep.CI {
			return nil, notes, fmt.Errorf("update: CI mode forbids writing goldens (%d would be written)", len(rep.Refused))
		}
		if len(rep.Problems) > 0 {
			return nil, notes, fmt.Errorf("update: %s", strings.Join(rep.Problems, "; "))
		}
	}
	s, err := runner.Check(ctx, ro)
	if err != nil {
		return nil, notes, err
	}
	return s, append(notes, s.Notes...), nil
}

// options turns o into runner options.
func options(tr Tracker, o Options) (runner.Options, error) {
	var ro runner.Options
	if tr == nil {
		return ro, fmt.Errorf("no tracker")
	}
	var files []string
	for _, p := range o.Scenarios {
		m, err := filepath.Glob(p)
		if err != nil {
			return ro, fmt.Errorf("scenarios: bad pattern %q: %v", p, err)
		}
		if m == nil {
			if strings.ContainsAny(p, "*?[") {
				return ro, fmt.Errorf("scenarios: %q matches no file", p)
			}
			m = []string{p} // a plain file that does not exist: the runner names it
		}
		sort.Strings(m)
		files = append(files, m...)
	}
	if len(files) == 0 {
		return ro, fmt.Errorf("scenarios: %q match no file", o.Scenarios)
	}
	ready := tr.Ready()
	ro.Config = o.Config
	ro.Local = &runner.Local{Ready: ready, Begin: tr.Begin}
	ro.Scenarios = files
	ro.Against = runner.AgainstReference
	if o.Golden != "" {
		ro.Against, ro.GoldenDir = runner.AgainstBoth, o.Golden
	}
	ro.TrackerName = o.Name
	if ro.TrackerName == "" {
		ro.TrackerName = ready.Name
	}
	ro.Runs, ro.Workers, ro.Getenv = o.Runs, max(1, o.Workers), o.Getenv
	ro.Tool = "trackgate gatetest"
	return ro, nil
}

// Failures lists, one line each, what fails in s: every run whose status
// is worse than a tie, with its first divergence (or fault), and every
// failing gate; scenarios that could not be run are named by s.Notes.
func Failures(s *result.Suite) []string {
	var out []string
	for _, sc := range s.Scenarios {
		if sc.Status == result.Error && len(sc.Runs) == 0 {
			why := sc.File
			for _, n := range s.Notes {
				if rest, ok := strings.CutPrefix(n, "scenario "+sc.File+" not run: "); ok {
					why = rest
				}
			}
			out = append(out, fmt.Sprintf("%s: not run: %s", sc.Name, why))
		}
		for _, r := range sc.Runs {
			if r.Status.Rank() <= result.Tie.Rank() {
				continue
			}
			out = append(out, fmt.Sprintf("%s run %d (seed %d): %s", sc.Name, r.Index, r.Seed, firstFailure(r)))
		}
		for _, g := range sc.Gates {
			if g.Status.Rank() > result.Skip.Rank() {
				out = append(out, fmt.Sprintf("%s: gate %s %s: %s", sc.Name, g.Name, g.Status, g.Message))
			}
		}
	}
	return out
}

// firstFailure describes the earliest departure of a run: the failing
// check whose first divergence comes first, the worse status (a fault
// before a regression) at the same step.
func firstFailure(r result.Run) string {
	text, step, rank := string(r.Status), int(^uint(0)>>1), -1
	for _, c := range r.Checks {
		if c.Status.Rank() <= result.Tie.Rank() {
			continue
		}
		s, what := int(^uint(0)>>1), c.Message
		if c.First != nil {
			s, what = c.First.Step, fmt.Sprintf("step %d, %s: %s", c.First.Step, c.First.Kind, c.First.Message)
		}
		if s < step || (s == step && c.Status.Rank() > rank) {
			text, step, rank = fmt.Sprintf("%s %s at %s", c.Name, c.Status, what), s, c.Status.Rank()
		}
	}
	return text
}

// Ties lists the changed associations judged ties, one line per run that
// has any.
func Ties(s *result.Suite) []string {
	var out []string
	for _, sc := range s.Scenarios {
		for _, r := range sc.Runs {
			var steps []string
			for _, c := range r.Checks {
				for _, d := range c.Ties {
					steps = append(steps, fmt.Sprintf("%s step %d", c.Name, d.Step))
				}
			}
			if len(steps) > 0 {
				out = append(out, fmt.Sprintf("%s run %d: ties (not failures) at %s", sc.Name, r.Index, strings.Join(steps, ", ")))
			}
		}
	}
	return out
}

// Reference returns trackgate's reference tracker as a Tracker: a
// baseline, and a working example of the interface.
func Reference() Tracker { return reference{} }

type reference struct{}

func (reference) Ready() protocol.Ready {
	return protocol.Ready{Name: "trackgate-reference", Version: "in-process", Covariance: true, Association: true}
}

func (reference) Begin(s protocol.Start) (protocol.StepFunc, error) {
	ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
	return func(scan mot.Scan) (mot.Frame, error) {
		f, _, err := ref.Step(scan)
		return f, err
	}, nil
}
