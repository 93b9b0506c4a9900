package golden

import (
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"testing"

	"github.com/google/go-cmp/cmp"

	"trackgate/harness/compare"
)

// readTree returns every file under root by relative path.
func readTree(t *testing.T, root string) map[string]string {
	t.Helper()
	out := map[string]string{}
	filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			t.Fatal(err)
		}
		if !d.IsDir() {
			b, _ := os.ReadFile(p)
			rel, _ := filepath.Rel(root, p)
			out[filepath.ToSlash(rel)] = string(b)
		}
		return nil
	})
	return out
}

func copyTree(t *testing.T, from, to string) {
	t.Helper()
	for rel, data := range readTree(t, from) {
		p := filepath.Join(to, filepath.FromSlash(rel))
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, []byte(data), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// TestUpdateFixtures runs the check-then-update flow of four runs of one
// scenario against testdata/update/before and compares the folder with
// testdata/update/after (written by hand): run 0 agrees within the
// float64-port tolerance but not bit for bit and must keep its bytes, run 1
// disagrees, run 2 is stale, run 3 is missing.
func TestUpdateFixtures(t *testing.T) {
	values := []float64{1.25, 1.75, 2.5, 0.5}
	run := func(t *testing.T, p Policy) (string, []Action) {
		root := t.TempDir()
		copyTree(t, filepath.Join("testdata", "update", "before"), root)
		var acts []Action
		for r, v := range values {
			id := ID{Scenario: "pier_crossing", Run: r, Kind: Metrics}
			path, err := Path(root, id)
			if err != nil {
				t.Fatal(err)
			}
			h := header(Metrics)
			h.Scenario, h.ScenarioHash, h.Run, h.Seed = "pier_crossing", "aa11", r, 5
			now := File{Header: h, Metrics: []Metric{{Name: "gospa_mean", Step: -1, Value: v}}}

			var s Status
			old, fr, err := ReadFresh(path, "pier_crossing", "aa11")
			switch {
			case errors.Is(err, fs.ErrNotExist):
				s = Missing
			case err != nil:
				t.Fatal(err)
			case fr != Fresh:
				s = Outdated
			default:
				res := compare.Metrics(compare.Float64Port(),
					map[string]float64{old.Metrics[0].Name: old.Metrics[0].Value},
					map[string]float64{now.Metrics[0].Name: now.Metrics[0].Value})
				s = Passing
				if !res.OK() {
					s = Failing
				}
			}
			a, err := p.Apply(path, s, now)
			if err != nil {
				t.Fatal(err)
			}
			acts = append(acts, a)
		}
		return root, acts
	}

	t.Run("update failing", func(t *testing.T) {
		root, acts := run(t, Policy{Mode: UpdateFailing})
		if diff := cmp.Diff([]Action{Keep, Rewrite, Rewrite, Rewrite}, acts); diff != "" {
			t.Errorf("actions (-want +got):\n%s", diff)
		}
		if diff := cmp.Diff(readTree(t, filepath.Join("testdata", "update", "after")), readTree(t, root)); diff != "" {
			t.Errorf("golden folder after update (-want +got):\n%s", diff)
		}
	})
	t.Run("ci", func(t *testing.T) {
		root, acts := run(t, Policy{Mode: UpdateAll, CI: true})
		if diff := cmp.Diff([]Action{Keep, Fail, Fail, Fail}, acts); diff != "" {
			t.Errorf("actions (-want +got):\n%s", diff)
		}
		if diff := cmp.Diff(readTree(t, filepath.Join("testdata", "update", "before")), readTree(t, root)); diff != "" {
			t.Errorf("CI wrote goldens (-before +after):\n%s", diff)
		}
	})
	t.Run("update all", func(t *testing.T) {
		root, _ := run(t, Policy{Mode: UpdateAll})
		got := readTree(t, root)["pier_crossing/run-0.metrics.jsonl"]
		want := readTree(t, filepath.Join("testdata", "update", "before"))["pier_crossing/run-0.metrics.jsonl"]
		if got == want {
			t.Errorf("update all kept the passing golden's old bytes")
		}
	})
}
