package runner

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"trackgate/harness/config"
)

// TestProjectSettingsReachTheRun: the project file's timeouts, metric
// parameters and golden run counts are the ones used, options override
// them, and an override matching no scenario is noted in the result.
func TestProjectSettingsReachTheRun(t *testing.T) {
	five := 5
	o := variantOptions("reference", scenarioFile("tie-mirror-pair"), scenarioFile("warmup-rail-carts"))
	o.Config.Tracker.StartTimeout, o.Config.Tracker.StepTimeout = 40*time.Second, 3*time.Second
	o.Config.Scoring = config.Scoring{Order: 1, Cutoff: 7}
	o.Config.GoldenRuns = 2
	o.Config.PerScenario = []config.Override{
		{Match: "warmup-*", GoldenRuns: &five},
		{Match: "quay-*", Line: 9, Col: 12, TieMargin: new(float64)},
	}
	s, err := resolve(o, true)
	if err != nil {
		t.Fatal(err)
	}
	if s.drv.StartTimeout != 40*time.Second || s.drv.ReplyTimeout != 3*time.Second {
		t.Errorf("driver timeouts start %v, reply %v; want the project's 40s and 3s", s.drv.StartTimeout, s.drv.ReplyTimeout)
	}
	if s.order != 1 || s.cutoff != 7 {
		t.Errorf("GOSPA order %g, cut-off %g; want the project's 1 and 7", s.order, s.cutoff)
	}
	scens := s.load()
	for _, sc := range scens {
		sc.planned, sc.spec.Runs = 10, 10
	}
	if g0, g1 := s.goldenRunsOf(scens[0]), s.goldenRunsOf(scens[1]); g0 != 2 || g1 != 5 {
		t.Errorf("golden runs %d and %d, want the project's 2 and the override's 5", g0, g1)
	}
	o2 := o
	o2.Cutoff, o2.GoldenRuns = 12, 1
	s2, err := resolve(o2, true)
	if err != nil {
		t.Fatal(err)
	}
	if s2.cutoff != 12 || s2.goldenRunsOf(scens[1]) != 1 {
		t.Errorf("options did not override the project: cut-off %g, golden runs %d", s2.cutoff, s2.goldenRunsOf(scens[1]))
	}
	o.Against, o.Runs = AgainstReference, 2
	suite := checkOf(t, o)
	found := false
	for _, n := range suite.Notes {
		found = found || strings.Contains(n, `per_scenario[1].match: pattern "quay-*" matches none of the 2 scenarios loaded`)
	}
	if !found {
		t.Errorf("notes %q do not report the unused override", suite.Notes)
	}
	bad := o
	bad.Config.Scoring.Order = 0.5
	if _, err := resolve(bad, true); err == nil || !strings.Contains(err.Error(), "metrics.order") {
		t.Errorf("order 0.5 accepted: %v", err)
	}
}

// TestGOSPAOrderChangesTheScore: the metrics follow the project's GOSPA
// order. A missed object costs (c^p/2)^(1/p) at a step with nothing else
// (Rahmathullah, García-Fernández, Svensson, FUSION 2017, Definition 1 with
// α = 2), which differs between p = 1 and p = 2, so the mean GOSPA of a
// scenario whose objects are not all tracked at every step differs too.
func TestGOSPAOrderChangesTheScore(t *testing.T) {
	run := func(order float64) float64 {
		o := variantOptions("reference", scenarioFile("lifecycle-warehouse-forklifts"))
		o.Against, o.Runs = AgainstReference, 1
		o.Config.Scoring.Order = order
		s := checkOf(t, o)
		return s.Scenarios[0].Metrics.MeanGOSPA
	}
	if a, b := run(1), run(2); a == b || !(a > 0) || !(b > 0) {
		t.Errorf("mean GOSPA %g with order 1 and %g with order 2; want two different positive values", a, b)
	}
}

// TestBlessHonoursGoldenRuns: bless writes goldens for the project's
// golden run count of each scenario.
func TestBlessHonoursGoldenRuns(t *testing.T) {
	root := t.TempDir()
	one := 1
	o := variantOptions("reference", scenarioFile("tie-mirror-pair"), scenarioFile("warmup-rail-carts"))
	o.GoldenDir, o.TrackerName = root, "rail-tracker"
	o.Config.GoldenRuns = 2
	o.Config.PerScenario = []config.Override{{Match: "tie-*", GoldenRuns: &one}}
	if _, err := Bless(context.Background(), BlessOptions{Options: o}); err != nil {
		t.Fatal(err)
	}
	for dir, want := range map[string]int{"tie-mirror-pair": 1, "warmup-rail-carts": 2} {
		tapes, _ := filepath.Glob(filepath.Join(root, dir, "run-*.tape.jsonl"))
		if len(tapes) != want {
			t.Errorf("%s: %d scan tapes blessed, want %d", dir, len(tapes), want)
		}
	}
	if _, err := os.Stat(root); err != nil {
		t.Fatal(err)
	}
}
