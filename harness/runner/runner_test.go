package runner

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/golden"
	"trackgate/harness/result"
	"trackgate/harness/shard"
)

const stock = "../../scenarios/"

// scenarioFile returns the path of a stock scenario.
func scenarioFile(name string) string { return stock + name + ".yaml" }

// checkOf runs Check and fails the test on an error.
func checkOf(t *testing.T, o Options) *result.Suite {
	t.Helper()
	s, err := Check(context.Background(), o)
	if err != nil {
		t.Fatalf("Check: %v", err)
	}
	return s
}

// findCheck returns the named check of run r of scenario i.
func findCheck(t *testing.T, s *result.Suite, i, r int, name string) result.Check {
	t.Helper()
	for _, c := range s.Scenarios[i].Runs[r].Checks {
		if c.Name == name {
			return c
		}
	}
	t.Fatalf("scenario %s run %d has no %q check", s.Scenarios[i].Name, r, name)
	return result.Check{}
}

// TestHarmlessVariantsPass: renaming tracks, listing them in another order,
// handing detections over in another order and not reporting covariances
// are never regressions.
func TestHarmlessVariantsPass(t *testing.T) {
	files := []string{scenarioFile("crossing-harbour-vessels"), scenarioFile("lifecycle-warehouse-forklifts"), scenarioFile("tie-mirror-pair")}
	for _, variant := range []string{"reference", "relabel", "nocov", "nocov-flip"} {
		t.Run(variant, func(t *testing.T) {
			o := variantOptions(variant, files...)
			o.Against, o.Runs = AgainstReference, 2
			s := checkOf(t, o)
			if s.Status.Rank() > result.Tie.Rank() {
				for _, sc := range s.Scenarios {
					for _, r := range sc.Runs {
						for _, c := range r.Checks {
							if c.Status.Rank() > result.Tie.Rank() {
								t.Errorf("%s run %d %s: %s %s %+v", sc.Name, r.Index, c.Name, c.Status, c.Message, c.First)
							}
						}
					}
				}
				t.Fatalf("status %s, want pass or tie", s.Status)
			}
			if variant == "nocov" {
				for _, c := range s.Scenarios[0].Runs[0].Checks {
					if c.Name == "conformance" {
						t.Errorf("a tracker without covariances got a conformance check")
					}
				}
			}
		})
	}
}

// TestTieResolvedOtherWay: in tie-mirror-pair the two hypotheses of step 1
// cost exactly the same; a tracker that picks the other one (here: the
// reference fed the detections in reverse order) is a tie in every check,
// not a regression, and the reference gives its hypothesis probability ½.
func TestTieResolvedOtherWay(t *testing.T) {
	o := variantOptions("flip", scenarioFile("tie-mirror-pair"))
	o.Against = AgainstReference
	s := checkOf(t, o)
	if s.Status != result.Tie {
		t.Fatalf("status %s, want tie", s.Status)
	}
	// After the tie at step 1 the reference check follows the reference
	// down the tracker's branch, and the conformance check restarts from the
	// tracker's state at every step; both meet a second exact tie at step 2:
	// both predictions are then mirror images about the x axis and the
	// detections (±2, 0) lie on it.
	for _, tt := range []struct {
		name  string
		steps []int
	}{{"reference", []int{1, 2}}, {"conformance", []int{1, 2}}} {
		c := findCheck(t, s, 0, 0, tt.name)
		if c.Status != result.Tie || len(c.Ties) != len(tt.steps) {
			t.Fatalf("%s check: status %s with %d ties, want %d: %s", tt.name, c.Status, len(c.Ties), len(tt.steps), c.Message)
		}
		for i, tie := range c.Ties {
			if tie.Step != tt.steps[i] || tie.Kind != "association" || len(tie.Objects) != 2 {
				t.Errorf("%s tie = %+v, want step %d, association, both floats", tt.name, tie, tt.steps[i])
			}
			// Both hypotheses cost exactly the same, so each has
			// probability ½ and the margin is 0 (closed form; see the
			// scenario's comment).
			if tie.Margin == nil || *tie.Margin != 0 || tie.Probability == nil || *tie.Probability != 0.5 {
				t.Errorf("%s tie margin %v probability %v, want 0 and 0.5", tt.name, tie.Margin, tie.Probability)
			}
		}
	}
	if c := findCheck(t, s, 0, 0, "reference"); !strings.Contains(c.Message, "followed down the tracker's branch") {
		t.Errorf("reference check message %q does not say that the tracker's branch was followed", c.Message)
	}
}

// TestHarmfulVariantsFail: each harmful change is found, at the right
// step, with the right kind, and the exit code ranks a fault above a
// regression.
func TestHarmfulVariantsFail(t *testing.T) {
	tests := []struct {
		variant, check, kind string
		step                 int
		status               result.Status
	}{
		{"swap", "identity", "identity", 5, result.Fail},
		{"nudge", "conformance", "estimate", 7, result.Fail},
		{"nudge", "reference", "estimate", 7, result.Fail},
		{"drop", "reference", "track-count", 4, result.Fail},
		{"crash", "tracker", "fault", 3, result.Faulted},
	}
	for _, tt := range tests {
		t.Run(tt.variant+"/"+tt.check, func(t *testing.T) {
			o := variantOptions(tt.variant, scenarioFile("crossing-harbour-vessels"))
			o.Against, o.Runs = AgainstReference, 1
			s := checkOf(t, o)
			if s.Status != tt.status {
				t.Fatalf("suite status %s, want %s", s.Status, tt.status)
			}
			c := findCheck(t, s, 0, 0, tt.check)
			if c.First == nil || c.First.Step != tt.step || c.First.Kind != tt.kind {
				t.Fatalf("%s check first divergence %+v, want step %d kind %s (%s)", tt.check, c.First, tt.step, tt.kind, c.Message)
			}
			want := map[result.Status]int{result.Fail: 1, result.Faulted: 3}[tt.status]
			if got := ExitCode(s.Status); got != want {
				t.Errorf("ExitCode(%s) = %d, want %d", s.Status, got, want)
			}
		})
	}
}

// TestNudgeIsLocalised: the conformance check restarts from the tracker's
// own state, so a single wrong estimate at step 7 is reported at step 7
// (and at step 8, which starts from it), not as a cascade to the end of the
// run.
func TestNudgeIsLocalised(t *testing.T) {
	o := variantOptions("nudge", scenarioFile("crossing-harbour-vessels"))
	o.Against, o.Runs = AgainstReference, 1
	s := checkOf(t, o)
	c := findCheck(t, s, 0, 0, "conformance")
	for _, d := range c.Diffs {
		if !strings.HasPrefix(d.Path, "step 7 /") && !strings.HasPrefix(d.Path, "step 8 /") {
			t.Errorf("difference outside steps 7 and 8: %+v", d)
		}
	}
	if len(c.Diffs) == 0 {
		t.Fatal("no differences recorded")
	}
}

// TestWorkersDoNotChangeResults: -j 1 and -j 3 give byte-identical results.
func TestWorkersDoNotChangeResults(t *testing.T) {
	var out [][]byte
	root := t.TempDir()
	for _, w := range []int{1, 3} {
		o := variantOptions("relabel", scenarioFile("convoy-parallel-trucks"), scenarioFile("tie-mirror-pair"))
		o.Runs, o.Workers, o.GoldenDir = 3, w, root
		s := checkOf(t, o)
		b, err := result.Marshal(s)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, b)
	}
	if !bytes.Equal(out[0], out[1]) {
		t.Fatal("results differ between 1 and 3 workers")
	}
}

// TestStockLibraryPasses runs check --against both on the committed golden
// set with the reference tracker in CI mode (nothing written, a missing
// golden fails): the gate CI runs on the project itself.
func TestStockLibraryPasses(t *testing.T) {
	cfg, err := config.Load("../../trackgate.yaml")
	if err != nil {
		t.Fatal(err)
	}
	o := variantOptions("reference")
	o.Scenarios = nil
	o.Config, o.CI = cfg, true
	o.Config.Tracker.Env = map[string]string{variantEnv: "reference", "GORACE": "atexit_sleep_ms=0"}
	if testing.Short() {
		// Half of the (scenario, run) pairs; every held run below G still
		// has its goldens.
		o.Shard = shard.Spec{Index: 0, Total: 2}
	}
	before := snapshot(t, "../../golden")
	s := checkOf(t, o)
	if s.Status != result.Pass {
		for _, sc := range s.Scenarios {
			for _, r := range sc.Runs {
				for _, c := range r.Checks {
					if c.Status != result.Pass {
						t.Errorf("%s run %d %s: %s: %s", sc.Name, r.Index, c.Name, c.Status, c.Message)
					}
				}
			}
			for _, g := range sc.Gates {
				if g.Status != result.Pass {
					t.Errorf("%s gate %s: %s: %s", sc.Name, g.Name, g.Status, g.Message)
				}
			}
		}
		t.Fatalf("status %s, want pass", s.Status)
	}
	if len(s.Scenarios) < 11 {
		t.Errorf("%d scenarios checked, want the 11 of the stock library", len(s.Scenarios))
	}
	if after := snapshot(t, "../../golden"); !equalSnap(before, after) {
		t.Error("check in CI mode changed the golden folder")
	}
}

// snapshot maps every file under root to its bytes.
func snapshot(t *testing.T, root string) map[string]string {
	t.Helper()
	out := map[string]string{}
	err := filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := os.ReadFile(p)
		out[p] = string(b)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func equalSnap(a, b map[string]string) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if w, ok := b[k]; !ok || w != v {
			return false
		}
	}
	return true
}

// blessInto blesses the given scenarios into root with the reference
// variant and returns the report.
func blessInto(t *testing.T, root string, all bool, getenv func(string) string, files ...string) *BlessReport {
	t.Helper()
	o := variantOptions("reference", files...)
	o.GoldenDir, o.TrackerName, o.GoldenRuns = root, "harbour-tracker", 2
	if getenv != nil {
		o.Getenv = getenv
	}
	rep, err := Bless(context.Background(), BlessOptions{Options: o, All: all})
	if err != nil {
		t.Fatal(err)
	}
	return rep
}

// TestBlessThenCheck: bless writes every golden once, a second bless keeps
// them all, check against the goldens passes, a golden pushed beyond its
// tolerance fails the check, leaves the actual output for review, and the
// next bless rewrites exactly that file.
func TestBlessThenCheck(t *testing.T) {
	root := t.TempDir()
	files := []string{scenarioFile("tie-mirror-pair"), scenarioFile("warmup-rail-carts")}
	rep := blessInto(t, root, false, nil, files...)
	// tie-mirror-pair has 1 run, warmup-rail-carts 2 golden runs; 5 files
	// each, and one file of every run's whole-run values per scenario.
	if len(rep.New) != 17 || len(rep.Written)+len(rep.Unchanged)+len(rep.Refused) != 0 || rep.ExitCode() != 0 {
		t.Fatalf("first bless: new %d written %d unchanged %d refused %d problems %v", len(rep.New), len(rep.Written), len(rep.Unchanged), len(rep.Refused), rep.Problems)
	}
	rep = blessInto(t, root, false, nil, files...)
	if len(rep.Unchanged) != 17 || len(rep.New)+len(rep.Written) != 0 {
		t.Fatalf("second bless: new %d written %d unchanged %d", len(rep.New), len(rep.Written), len(rep.Unchanged))
	}
	o := variantOptions("relabel", files...)
	o.GoldenDir, o.TrackerName, o.GoldenRuns, o.Against = root, "harbour-tracker", 2, AgainstGolden
	if s := checkOf(t, o); s.Status.Rank() > result.Tie.Rank() {
		for _, sc := range s.Scenarios {
			for _, r := range sc.Runs {
				for _, c := range r.Checks {
					t.Logf("%s run %d %s: %s: %s %+v", sc.Name, r.Index, c.Name, c.Status, c.Message, c.First)
				}
			}
		}
		t.Fatalf("check against fresh goldens: %s", s.Status)
	}

	// Move one blessed mean by 1 mm: far beyond the float64-port profile.
	out := filepath.Join(root, "warmup-rail-carts", "harbour-tracker", "run-1.jsonl")
	f, err := golden.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	f.Frames[3].Tracks[0].Mean[0] += 1e-3
	if err := golden.Write(out, f); err != nil {
		t.Fatal(err)
	}
	s := checkOf(t, o)
	if s.Status != result.Fail || ExitCode(s.Status) != 1 {
		t.Fatalf("check against a changed golden: %s", s.Status)
	}
	g := findCheck(t, s, 1, 1, "golden")
	if g.First == nil || g.First.Step != 3 || g.First.Kind != "estimate" {
		t.Errorf("golden check first divergence %+v, want step 3 estimate", g.First)
	}
	if _, err := os.Stat(out + ".actual"); err != nil {
		t.Errorf("no actual output left beside the failing golden: %v", err)
	}
	rep = blessInto(t, root, false, nil, files...)
	rel := filepath.Join("warmup-rail-carts", "harbour-tracker", "run-1.jsonl")
	if len(rep.Written) != 1 || rep.Written[0] != rel || len(rep.Unchanged) != 16 {
		t.Fatalf("bless after the change: written %v, unchanged %d, want only %s", rep.Written, len(rep.Unchanged), rel)
	}
}

// TestCIModeNeverWrites: with CI=true in the environment neither check nor
// bless writes anything, and a missing golden fails.
func TestCIModeNeverWrites(t *testing.T) {
	root := t.TempDir()
	files := []string{scenarioFile("tie-mirror-pair")}
	blessInto(t, root, false, nil, files...)
	missing := filepath.Join(root, "tie-mirror-pair", "harbour-tracker", "run-0.jsonl")
	if err := os.Remove(missing); err != nil {
		t.Fatal(err)
	}
	// A failing golden too, so that check has a reason to leave output.
	ref := filepath.Join(root, "tie-mirror-pair", "harbour-tracker", "run-0.metrics.jsonl")
	f, err := golden.ReadFile(ref)
	if err != nil {
		t.Fatal(err)
	}
	f.Metrics[0].Value += 1
	if err := golden.Write(ref, f); err != nil {
		t.Fatal(err)
	}
	before := snapshot(t, root)
	ci := func(k string) string {
		if k == "CI" {
			return "true"
		}
		return ""
	}
	o := variantOptions("reference", files...)
	o.GoldenDir, o.TrackerName, o.GoldenRuns, o.Against, o.Getenv = root, "harbour-tracker", 2, AgainstGolden, ci
	s := checkOf(t, o)
	if s.Status != result.Fail {
		t.Fatalf("check in CI mode with a missing golden: %s, want fail", s.Status)
	}
	if c := findCheck(t, s, 0, 0, "golden"); !strings.Contains(c.Message, "CI mode") {
		t.Errorf("golden check message %q does not mention CI mode", c.Message)
	}
	rep := blessInto(t, root, true, ci, files...)
	if !rep.CI || len(rep.Refused) == 0 || len(rep.Written)+len(rep.New) != 0 || rep.ExitCode() != 1 {
		t.Fatalf("bless in CI mode: ci %v refused %d written %d new %d exit %d", rep.CI, len(rep.Refused), len(rep.Written), len(rep.New), rep.ExitCode())
	}
	if after := snapshot(t, root); !equalSnap(before, after) {
		t.Fatal("CI mode changed the golden folder")
	}
}

// TestStaleGolden: a golden blessed from another version of the scenario
// file is never compared; the run is an error (exit 2).
func TestStaleGolden(t *testing.T) {
	root := t.TempDir()
	dir := t.TempDir()
	src, err := os.ReadFile(scenarioFile("tie-mirror-pair"))
	if err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(dir, "tie-mirror-pair.yaml")
	if err := os.WriteFile(file, src, 0o644); err != nil {
		t.Fatal(err)
	}
	blessInto(t, root, false, nil, file)
	// Same scenario, edited: only a comment changes, but the hash does.
	if err := os.WriteFile(file, append(src, []byte("# edited after blessing\n")...), 0o644); err != nil {
		t.Fatal(err)
	}
	o := variantOptions("reference", file)
	o.GoldenDir, o.TrackerName, o.GoldenRuns, o.Against = root, "harbour-tracker", 2, AgainstGolden
	s := checkOf(t, o)
	if s.Status != result.Error || ExitCode(s.Status) != 2 {
		t.Fatalf("status %s, want error", s.Status)
	}
	if c := findCheck(t, s, 0, 0, "golden"); !strings.Contains(c.Message, "stale") {
		t.Errorf("golden check message %q does not say stale", c.Message)
	}
}

// TestChangedTapeIsAnError: a tape golden that no longer matches the
// simulator is the harness's change, named as such, not the tracker's.
func TestChangedTapeIsAnError(t *testing.T) {
	root := t.TempDir()
	files := []string{scenarioFile("tie-mirror-pair")}
	blessInto(t, root, false, nil, files...)
	tape := filepath.Join(root, "tie-mirror-pair", "run-0.tape.jsonl")
	f, err := golden.ReadFile(tape)
	if err != nil {
		t.Fatal(err)
	}
	f.Steps[2].Scan.Detections[0].Z[0] = 0.5
	if err := golden.Write(tape, f); err != nil {
		t.Fatal(err)
	}
	o := variantOptions("reference", files...)
	o.GoldenDir, o.TrackerName, o.GoldenRuns, o.Against = root, "harbour-tracker", 2, AgainstGolden
	s := checkOf(t, o)
	c := findCheck(t, s, 0, 0, "golden")
	if s.Status != result.Error || !strings.Contains(c.Message, "simulator") || !strings.Contains(c.Message, "step 2") {
		t.Fatalf("status %s, message %q; want an error naming the simulator and step 2", s.Status, c.Message)
	}
}

// TestBadScenarioIsAnError: a scenario that does not load is an error of
// that scenario; the others still run.
func TestBadScenarioIsAnError(t *testing.T) {
	bad := filepath.Join(t.TempDir(), "broken.yaml")
	if err := os.WriteFile(bad, []byte("format: 1\nname: broken\nsteps: many\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	o := variantOptions("reference", bad, scenarioFile("tie-mirror-pair"))
	o.Against = AgainstReference
	s := checkOf(t, o)
	if s.Status != result.Error || s.Scenarios[0].Status != result.Error || s.Scenarios[1].Status != result.Pass {
		t.Fatalf("statuses %s / %s / %s, want error / error / pass", s.Status, s.Scenarios[0].Status, s.Scenarios[1].Status)
	}
	if len(s.Notes) == 0 || !strings.Contains(s.Notes[0], "broken.yaml") {
		t.Errorf("notes %q do not name the broken file", s.Notes)
	}
}

// TestRunsOverrideKeepsTheGoldenSet: raising the run count above a
// scenario's own (tie-mirror-pair has one run) checks the extra runs against
// the reference only; the golden set is that of the scenario file, so CI
// mode does not report the extra runs' goldens as missing.
func TestRunsOverrideKeepsTheGoldenSet(t *testing.T) {
	cfg, err := config.Load("../../trackgate.yaml")
	if err != nil {
		t.Fatal(err)
	}
	o := variantOptions("reference")
	o.Scenarios = []string{scenarioFile("tie-mirror-pair")}
	o.Config, o.CI, o.Runs = cfg, true, 2
	o.Config.Tracker.Env = map[string]string{variantEnv: "reference", "GORACE": "atexit_sleep_ms=0"}
	s := checkOf(t, o)
	if s.Status != result.Pass {
		t.Fatalf("status %s, want pass; notes %q", s.Status, s.Notes)
	}
	if n := len(s.Scenarios[0].Runs); n != 2 {
		t.Fatalf("%d runs checked, want 2", n)
	}
	for _, c := range s.Scenarios[0].Runs[1].Checks {
		if c.Name == "golden" {
			t.Errorf("run 1 has a golden check (%s: %s), but the scenario's golden set is run 0 only", c.Status, c.Message)
		}
	}
	if findCheck(t, s, 0, 0, "golden").Status != result.Pass {
		t.Error("run 0 lost its golden check")
	}
}
