package runner

import (
	"context"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"trackgate/harness/golden"
	"trackgate/harness/result"
)

// quayOptions runs the in-process quay tracker against goldens under root.
func quayOptions(root string, takeStray bool) Options { return quayOptions2(root, false, takeStray) }

func quayOptions2(root string, flipTied, takeStray bool) Options {
	var o Options
	o.Scenarios = []string{quayFile}
	o.Workers = 1
	o.Getenv = func(string) string { return "" }
	o.Config.TieMargin = 0.01
	o.GoldenDir, o.TrackerName = root, "quay-crane-tracker"
	o.Local = quayTracker(flipTied, takeStray)
	return o
}

func blessQuay(t *testing.T, root string, takeStray bool) *BlessReport {
	t.Helper()
	rep, err := Bless(context.Background(), BlessOptions{Options: quayOptions(root, takeStray)})
	if err != nil {
		t.Fatal(err)
	}
	if len(rep.Problems) > 0 {
		t.Fatalf("bless problems: %v", rep.Problems)
	}
	return rep
}

func goldenCheck(t *testing.T, s *result.Suite) result.Check {
	t.Helper()
	return findCheck(t, s, 0, 0, "golden")
}

// TestBlessRewritesOutputAndMetricsTogether: after a harmful change of
// association (the forklift takes a stray return), bless rewrites the
// tracker's output golden and its metrics golden as one unit, and a check
// of the same tracker against them then agrees everywhere.
func TestBlessRewritesOutputAndMetricsTogether(t *testing.T) {
	root := t.TempDir()
	blessQuay(t, root, false)
	rep := blessQuay(t, root, true)
	out := filepath.Join("quay-pallets-and-forklift", "quay-crane-tracker", "run-0.jsonl")
	met := filepath.Join("quay-pallets-and-forklift", "quay-crane-tracker", "run-0.metrics.jsonl")
	if !slices.Contains(rep.Written, out) || !slices.Contains(rep.Written, met) {
		t.Fatalf("bless after a changed association wrote %v, want both %s and %s", rep.Written, out, met)
	}
	o := quayOptions(root, true)
	o.Against = AgainstGolden
	s := checkOf(t, o)
	g := goldenCheck(t, s)
	if g.Status != result.Pass || strings.Contains(g.Message, "differ") {
		t.Fatalf("check against the re-blessed goldens: %s: %s", g.Status, g.Message)
	}
}

// TestStaleTrackerMetricsIsAnError: a tracker metrics golden that no
// longer matches the tracker's output golden, which the run reproduces, is
// an inconsistent golden: the check errs (exit 2) and says to bless again.
func TestStaleTrackerMetricsIsAnError(t *testing.T) {
	root := t.TempDir()
	blessQuay(t, root, false)
	p := filepath.Join(root, "quay-pallets-and-forklift", "quay-crane-tracker", "run-0.metrics.jsonl")
	f, err := golden.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	changed := false
	for i := range f.Metrics {
		if f.Metrics[i].Name == MetricMeanGOSPA {
			f.Metrics[i].Value += 2 // metres: far beyond any metric tolerance
			changed = true
		}
	}
	if !changed {
		t.Fatalf("no %s record in %s", MetricMeanGOSPA, p)
	}
	if err := golden.Write(p, f); err != nil {
		t.Fatal(err)
	}
	o := quayOptions(root, false)
	o.Against = AgainstGolden
	s := checkOf(t, o)
	g := goldenCheck(t, s)
	if g.Status != result.Error || ExitCode(s.Status) != 2 {
		t.Fatalf("golden check %s (suite exit %d), want error and exit 2: %s", g.Status, ExitCode(s.Status), g.Message)
	}
	if !strings.Contains(g.Message, "bless again") || !strings.Contains(g.Message, "run-0.metrics.jsonl") {
		t.Errorf("message does not name the metrics golden and say to bless again: %s", g.Message)
	}
}

// TestChangedOutputFailsWithItsMetrics: when the tracker's output departs
// from its golden by a harmful association, the check fails (exit 1), and
// the metrics difference is reported as part of that failure.
func TestChangedOutputFailsWithItsMetrics(t *testing.T) {
	root := t.TempDir()
	blessQuay(t, root, false)
	o := quayOptions(root, true)
	o.Against = AgainstGolden
	s := checkOf(t, o)
	g := goldenCheck(t, s)
	if g.Status != result.Fail || ExitCode(s.Status) != 1 {
		t.Fatalf("golden check %s (suite exit %d), want fail and exit 1: %s", g.Status, ExitCode(s.Status), g.Message)
	}
	if !strings.Contains(g.Message, "tracker metrics differ") {
		t.Errorf("the metrics difference is not reported with the failure: %s", g.Message)
	}
}

// TestGoldenChangeJudgedPerCluster: against the blessed output, a changed
// association is judged by the margin of the reference's cluster it
// happens in. At step 1 of the quay scenario the pallets' cluster is an
// exact tie (the scan's margin is 0) while the forklift's is clear
// (quayMargin): resolving the pallets' tie the other way is a tie, taking
// the forklift's stray return fails and names the forklift alone, with its
// own margin, even when the pallets' tie flips at the same step.
func TestGoldenChangeJudgedPerCluster(t *testing.T) {
	root := t.TempDir()
	blessQuay(t, root, false)
	for _, tt := range []struct {
		name                string
		flipTied, takeStray bool
		want                result.Status
	}{
		{"tied cluster flips", true, false, result.Tie},
		{"clear cluster changes", false, true, result.Fail},
		{"both at once", true, true, result.Fail},
	} {
		t.Run(tt.name, func(t *testing.T) {
			o := quayOptions2(root, tt.flipTied, tt.takeStray)
			o.Against = AgainstGolden
			g := goldenCheck(t, checkOf(t, o))
			if g.Status != tt.want {
				t.Fatalf("golden check %s, want %s: %s", g.Status, tt.want, g.Message)
			}
			if tt.want != result.Fail {
				return
			}
			if g.First == nil || g.First.Kind != "association" || g.First.Step != 1 {
				t.Fatalf("first divergence %+v, want an association at step 1", g.First)
			}
			if len(g.First.Objects) != 1 || !strings.Contains(g.First.Objects[0], "forklift") {
				t.Errorf("divergence names %v, want the forklift alone", g.First.Objects)
			}
			if g.First.Margin == nil || math.Abs(*g.First.Margin-quayMargin) > 1e-9 {
				t.Errorf("divergence margin %v, want the forklift cluster's %g", g.First.Margin, quayMargin)
			}
			if tt.flipTied && len(g.Ties) == 0 {
				t.Errorf("the pallets' flipped tie is not reported as a tie")
			}
		})
	}
}

// TestTiedBlessKeepsGoldensConsistent: a tracker that resolves the
// pallets' exact tie the other way parts from its golden legitimately;
// blessing it keeps the run's output and metrics goldens (they pass) and
// the run values golden agrees with them, so the check of the same
// tracker is not an error.
func TestTiedBlessKeepsGoldensConsistent(t *testing.T) {
	root := t.TempDir()
	blessQuay(t, root, false)
	o := quayOptions2(root, true, false)
	rep, err := Bless(context.Background(), BlessOptions{Options: o})
	if err != nil || len(rep.Problems) > 0 {
		t.Fatalf("bless: %v %v", err, rep.Problems)
	}
	if len(rep.Written)+len(rep.New) != 0 {
		t.Errorf("bless of a tracker that only resolves a tie otherwise wrote %v %v", rep.Written, rep.New)
	}
	o.Against = AgainstGolden
	g := goldenCheck(t, checkOf(t, o))
	if g.Status.Rank() > result.Tie.Rank() {
		t.Fatalf("golden check %s: %s", g.Status, g.Message)
	}
}
