package runner

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"testing"

	"trackgate/harness/golden"
	"trackgate/harness/result"
	"trackgate/harness/shard"
)

// TestShardsCoverTheSuite: the runs of two shards are exactly the runs of
// the unsharded suite, each with the same result.
func TestShardsCoverTheSuite(t *testing.T) {
	files := []string{scenarioFile("warmup-rail-carts"), scenarioFile("dropout-quay-lidar")}
	run := func(sp shard.Spec) *result.Suite {
		o := variantOptions("relabel", files...)
		o.Against, o.Runs, o.Shard = AgainstReference, 4, sp
		return checkOf(t, o)
	}
	key := func(sc result.Scenario, r result.Run) string { return sc.Name + "/" + string(rune('0'+r.Index)) }
	full := map[string][]byte{}
	for _, sc := range run(shard.All).Scenarios {
		for _, r := range sc.Runs {
			r.Trace = nil
			b, _ := json.Marshal(r)
			full[key(sc, r)] = b
		}
	}
	seen := map[string]bool{}
	for i := 0; i < 2; i++ {
		s := run(shard.Spec{Index: i, Total: 2})
		if s.Shard == nil || s.Shard.Index != i || s.Shard.Total != 2 {
			t.Fatalf("shard %d: suite.Shard = %+v", i, s.Shard)
		}
		for _, sc := range s.Scenarios {
			for _, r := range sc.Runs {
				k := key(sc, r)
				if seen[k] {
					t.Errorf("%s in two shards", k)
				}
				seen[k] = true
				r.Trace = nil
				b, _ := json.Marshal(r)
				if !bytes.Equal(b, full[k]) {
					t.Errorf("%s differs between the shard and the full suite", k)
				}
			}
		}
	}
	if len(seen) != len(full) || len(full) != 8 {
		t.Errorf("shards hold %d runs, the full suite %d, want 8", len(seen), len(full))
	}
}

// TestBlessPrunesOrphans: a golden of a run the project no longer has is
// listed as an orphan, kept without Prune and removed with it.
func TestBlessPrunesOrphans(t *testing.T) {
	root := t.TempDir()
	abs, err := filepath.Abs(scenarioFile("tie-mirror-pair"))
	if err != nil {
		t.Fatal(err)
	}
	o := variantOptions("reference")
	o.Scenarios = nil
	o.Config.Scenarios = []string{abs}
	o.GoldenDir, o.TrackerName = root, "harbour-tracker"
	if _, err := Bless(context.Background(), BlessOptions{Options: o}); err != nil {
		t.Fatal(err)
	}
	src := filepath.Join(root, "tie-mirror-pair", "run-0.tape.jsonl")
	orphan := filepath.Join(root, "tie-mirror-pair", "run-7.tape.jsonl")
	data, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(orphan, data, 0o644); err != nil {
		t.Fatal(err)
	}
	rep, err := Bless(context.Background(), BlessOptions{Options: o})
	if err != nil {
		t.Fatal(err)
	}
	want := filepath.Join("tie-mirror-pair", "run-7.tape.jsonl")
	if len(rep.Orphans) != 1 || rep.Orphans[0] != want || rep.Pruned {
		t.Fatalf("orphans %v pruned %v, want [%s] kept", rep.Orphans, rep.Pruned, want)
	}
	if _, err := os.Stat(orphan); err != nil {
		t.Fatal("the orphan was removed without Prune")
	}
	rep, err = Bless(context.Background(), BlessOptions{Options: o, Prune: true})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Pruned {
		t.Fatalf("orphans %v not pruned: %v", rep.Orphans, rep.Problems)
	}
	if _, err := os.Stat(orphan); !os.IsNotExist(err) {
		t.Errorf("the orphan is still there: %v", err)
	}
	if _, err := os.Stat(src); err != nil {
		t.Errorf("pruning removed a used golden: %v", err)
	}
}

// TestCIModeLeavesActualOnlyInOut: in CI mode a failing golden's actual
// output goes to the --out folder and nowhere else.
func TestCIModeLeavesActualOnlyInOut(t *testing.T) {
	root, files := tamperedGolden(t)
	out := t.TempDir()
	before := snapshot(t, root)
	o := variantOptions("reference", files...)
	o.GoldenDir, o.TrackerName, o.Against, o.CI, o.Out = root, "harbour-tracker", AgainstGolden, true, out
	if s := checkOf(t, o); s.Status != result.Fail {
		t.Fatalf("status %s, want fail", s.Status)
	}
	if !equalSnap(before, snapshot(t, root)) {
		t.Error("CI mode wrote into the golden folder")
	}
	if _, err := os.Stat(filepath.Join(out, "tie-mirror-pair", "harbour-tracker", "run-0.jsonl.actual")); err != nil {
		t.Errorf("no actual output under --out: %v", err)
	}
}

// TestExplainWritesNothing: explain with a tracker whose golden fails, not
// in CI mode and with no --out, still leaves the golden folder as it was:
// explaining only looks.
func TestExplainWritesNothing(t *testing.T) {
	root, files := tamperedGolden(t)
	before := snapshot(t, root)
	o := variantOptions("reference", files...)
	o.GoldenDir, o.TrackerName, o.Against = root, "harbour-tracker", AgainstBoth
	o.Getenv = func(string) string { return "" }
	var out bytes.Buffer
	if err := Explain(context.Background(), ExplainOptions{Options: o, File: files[0], Run: 0, Step: 2}, &out); err != nil {
		t.Fatalf("Explain: %v", err)
	}
	if !equalSnap(before, snapshot(t, root)) {
		t.Error("explain wrote into the golden folder")
	}
}

// tamperedGolden blesses tie-mirror-pair into a new folder as
// "harbour-tracker" and moves one blessed mean 0.25 m, far beyond any
// tolerance, so the golden check of run 0 fails at step 2. It returns the
// golden folder and the scenario files.
func tamperedGolden(t *testing.T) (root string, files []string) {
	t.Helper()
	root = t.TempDir()
	files = []string{scenarioFile("tie-mirror-pair")}
	blessInto(t, root, false, nil, files...)
	p := filepath.Join(root, "tie-mirror-pair", "harbour-tracker", "run-0.jsonl")
	f, err := golden.ReadFile(p)
	if err != nil {
		t.Fatal(err)
	}
	f.Frames[2].Tracks[1].Mean[2] -= 0.25
	if err := golden.Write(p, f); err != nil {
		t.Fatal(err)
	}
	return root, files
}
