package runner

import (
	"context"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"trackgate/harness/config"
	"trackgate/harness/golden"
	"trackgate/harness/mot"
	"trackgate/harness/protocol"
	"trackgate/harness/result"
	"trackgate/harness/shard"
	"trackgate/reference/tracker"
)

// offsetTracker is the reference tracker in process, its every track
// moved dx metres along the first position axis on the runs with index
// ≥ from.
func offsetTracker(dx float64, from int) *Local {
	return &Local{
		Ready: protocol.Ready{Name: "offset", Version: "1", Covariance: true, Association: true},
		Begin: func(s protocol.Start) (protocol.StepFunc, error) {
			ref := tracker.New(tracker.Config{Model: s.Model, Objects: s.Objects})
			shift := s.Run.Index >= from
			return func(scan mot.Scan) (mot.Frame, error) {
				f, _, err := ref.Step(scan)
				f.Tracks = slices.Clone(f.Tracks)
				if shift {
					for i := range f.Tracks {
						f.Tracks[i].Mean = slices.Clone(f.Tracks[i].Mean)
						f.Tracks[i].Mean[0] += dx
					}
				}
				return f, err
			}, nil
		},
	}
}

// convoyOptions checks convoy-parallel-trucks (10 runs, G = 3) with a
// paired gate on the mean GOSPA.
func convoyOptions(root string, l *Local) Options {
	var o Options
	o.Scenarios = []string{scenarioFile("convoy-parallel-trucks")}
	o.Workers = 2
	o.Getenv = func(string) string { return "" }
	o.GoldenDir, o.TrackerName, o.GoldenRuns = root, "convoy-tracker", 3
	o.Config.Gates = []config.Gate{{Metric: MetricMeanGOSPA, Paired: &config.Paired{Confidence: 0.95, MinEffect: 0.5}}}
	o.Local = l
	return o
}

func pairedOf(t *testing.T, s *result.Suite) result.Gate {
	t.Helper()
	for _, g := range s.Scenarios[0].Gates {
		if strings.HasSuffix(g.Name, "paired") {
			return g
		}
	}
	t.Fatalf("no paired gate in %+v", s.Scenarios[0].Gates)
	return result.Gate{}
}

// TestPairedGateCoversEveryRun: bless records the tracker's whole-run
// values for all 10 runs, not only the 3 golden runs, and the paired gate
// against the goldens pairs all of them: a tracker 4 m off on runs 3–9
// only, which the golden runs cannot see, fails it. With the run values
// golden removed, only the golden runs carry blessed values, and the gate
// says it falls back to the reference on every run.
func TestPairedGateCoversEveryRun(t *testing.T) {
	root := t.TempDir()
	rep, err := Bless(context.Background(), BlessOptions{Options: convoyOptions(root, offsetTracker(0, 0))})
	if err != nil || len(rep.Problems) > 0 {
		t.Fatalf("bless: %v %v", err, rep.Problems)
	}
	vp := filepath.Join(root, "convoy-parallel-trucks", "convoy-tracker", "metrics.jsonl")
	f, err := golden.ReadFile(vp)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Runs) != 10 || f.Runs[9].Run != 9 || len(f.Runs[9].Values) == 0 {
		t.Fatalf("run values golden holds %d runs, want 10 with values", len(f.Runs))
	}
	if !slices.Contains(rep.New, filepath.Join("convoy-parallel-trucks", "convoy-tracker", "metrics.jsonl")) {
		t.Errorf("bless did not report the new run values golden: %v", rep.New)
	}

	o := convoyOptions(root, offsetTracker(4, 3))
	o.Against = AgainstGolden
	s := checkOf(t, o)
	g := pairedOf(t, s)
	if g.Status != result.Fail || !strings.Contains(g.Message, "the blessed metrics on the same 10 seeds") {
		t.Fatalf("paired gate %s: %s; want a failure against the blessed metrics of 10 runs", g.Status, g.Message)
	}
	for _, r := range s.Scenarios[0].Runs {
		if len(r.BlessedValues) == 0 {
			t.Errorf("run %d carries no blessed values", r.Index)
		}
	}

	// The same tracker on its own blessed values passes.
	o = convoyOptions(root, offsetTracker(0, 0))
	o.Against = AgainstGolden
	if g := pairedOf(t, checkOf(t, o)); g.Status != result.Pass {
		t.Fatalf("unchanged tracker: paired gate %s: %s", g.Status, g.Message)
	}

	if err := os.Remove(vp); err != nil {
		t.Fatal(err)
	}
	o = convoyOptions(root, offsetTracker(4, 3))
	o.Against = AgainstGolden
	s = checkOf(t, o)
	g = pairedOf(t, s)
	if !strings.Contains(g.Message, "cover 3 of the 10 runs") || !strings.Contains(g.Message, "the reference on the same 10 seeds") {
		t.Fatalf("paired gate without run values: %s: %s", g.Status, g.Message)
	}
	if c := findCheck(t, s, 0, 0, "golden"); !strings.Contains(c.Message, "tracker run values") {
		t.Errorf("the missing run values golden is not reported: %s", c.Message)
	}
}

// TestStaleRunValuesIsAnError: a run values golden from another version
// of the scenario file makes the golden runs an error that names it.
func TestStaleRunValuesIsAnError(t *testing.T) {
	root := t.TempDir()
	o := quayOptions(root, false)
	blessQuay(t, root, false)
	vp := filepath.Join(root, "quay-pallets-and-forklift", "quay-crane-tracker", "metrics.jsonl")
	f, err := golden.ReadFile(vp)
	if err != nil {
		t.Fatal(err)
	}
	f.Header.ScenarioHash = "0000"
	if err := golden.Write(vp, f); err != nil {
		t.Fatal(err)
	}
	o.Against = AgainstGolden
	s := checkOf(t, o)
	g := goldenCheck(t, s)
	if g.Status != result.Error || !strings.Contains(g.Message, "stale golden "+vp) {
		t.Fatalf("golden check %s: %s; want an error naming the stale run values", g.Status, g.Message)
	}
}

// TestRunValuesShardsAndRunsOverride: blessing shard by shard fills one
// run values golden (each shard keeps the other's records), and a --runs
// override adds no runs beyond the scenario file's own.
func TestRunValuesShardsAndRunsOverride(t *testing.T) {
	root := t.TempDir()
	vp := filepath.Join(root, "warmup-rail-carts", "rail-tracker", "metrics.jsonl")
	bless := func(o Options) {
		t.Helper()
		o.Scenarios = []string{scenarioFile("warmup-rail-carts")}
		o.Workers = 2
		o.Getenv = func(string) string { return "" }
		o.GoldenDir, o.TrackerName, o.GoldenRuns = root, "rail-tracker", 2
		o.Local = offsetTracker(0, 0)
		rep, err := Bless(context.Background(), BlessOptions{Options: o})
		if err != nil || len(rep.Problems) > 0 {
			t.Fatalf("bless: %v %v", err, rep.Problems)
		}
	}
	runsOf := func() []int {
		t.Helper()
		f, err := golden.ReadFile(vp)
		if err != nil {
			t.Fatal(err)
		}
		var out []int
		for _, r := range f.Runs {
			out = append(out, r.Run)
		}
		return out
	}
	var o Options
	o.Shard = shard.Spec{Index: 0, Total: 2}
	bless(o)
	first := runsOf()
	if len(first) == 0 || len(first) == 5 {
		t.Fatalf("shard 0 of 2 blessed runs %v, want some of the 5", first)
	}
	o.Shard = shard.Spec{Index: 1, Total: 2}
	bless(o)
	if got := runsOf(); !slices.Equal(got, []int{0, 1, 2, 3, 4}) {
		t.Fatalf("after both shards the run values hold runs %v, want 0–4", got)
	}
	if err := os.Remove(vp); err != nil {
		t.Fatal(err)
	}
	o = Options{Runs: 8}
	bless(o)
	if got := runsOf(); !slices.Equal(got, []int{0, 1, 2, 3, 4}) {
		t.Fatalf("with --runs 8 the run values hold runs %v, want the file's 0–4", got)
	}
}

// TestRunValuesCacheSeesRewrite: a run values golden replaced on disk
// (bless writes by rename) is read again, not served from the cache.
func TestRunValuesCacheSeesRewrite(t *testing.T) {
	p := filepath.Join(t.TempDir(), "metrics.jsonl")
	h := golden.NewHeader(golden.RunValues, "canal-lock-barges", "77aa", 0, 0, 1)
	h.Tracker = "lock-keeper"
	for _, v := range []float64{1.5, 2.5} {
		f := golden.File{Header: h, Runs: []golden.RunValue{{Run: 0, Seed: 3, Values: map[string]float64{MetricMeanGOSPA: v}}}}
		if err := golden.Write(p, f); err != nil {
			t.Fatal(err)
		}
		for range 2 { // the second read comes from the cache
			g, err := readValues(p)
			if err != nil {
				t.Fatal(err)
			}
			if got := g.Runs[0].Values[MetricMeanGOSPA]; got != v {
				t.Fatalf("read %g after writing %g", got, v)
			}
		}
	}
}
