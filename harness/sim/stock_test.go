package sim

import (
	"bytes"
	"path/filepath"
	"strings"
	"testing"

	"trackgate/harness/scenario"
)

// TestStockScenarios simulates every run of every scenario in the stock
// library (scenarios/*.yaml), one subtest per file, and checks each run:
// the same bytes when simulated twice, an output that reads back, one scan
// and one truth record per step, the living objects of the spec at each
// step, and every detection's source an object of the scenario or clutter.
// It fails when the library is empty.
func TestStockScenarios(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "scenarios", "*.yaml"))
	if err != nil || len(files) == 0 {
		t.Fatalf("no stock scenarios in ../../scenarios (%v)", err)
	}
	for _, f := range files {
		t.Run(strings.TrimSuffix(filepath.Base(f), ".yaml"), func(t *testing.T) {
			spec, err := scenario.Load(f)
			if err != nil {
				t.Fatal(err)
			}
			s, err := Prepare(spec)
			if err != nil {
				t.Fatal(err)
			}
			ids := map[string]bool{"": true}
			for _, o := range spec.Objects {
				ids[o.ID] = true
			}
			for r := range spec.Runs {
				run := s.Run(r)
				data := render(t, spec, run)
				if again := render(t, spec, s.Run(r)); !bytes.Equal(data, again) {
					t.Fatalf("run %d: two simulations differ", r)
				}
				if _, err := Read(bytes.NewReader(data), f); err != nil {
					t.Fatalf("run %d: output does not read back: %v", r, err)
				}
				if len(run.Scans) != spec.Steps || len(run.Truth) != spec.Steps {
					t.Fatalf("run %d: %d scans, %d truth records, want %d", r, len(run.Scans), len(run.Truth), spec.Steps)
				}
				for k, tr := range run.Truth {
					alive := 0
					for _, o := range spec.Objects {
						if o.Alive(k) {
							alive++
						}
					}
					if len(tr.Objects) != alive {
						t.Fatalf("run %d step %d: %d objects in the truth, want %d", r, k, len(tr.Objects), alive)
					}
					for _, og := range tr.Origins {
						if !ids[og.Object] {
							t.Fatalf("run %d step %d: source %q is no object of the scenario", r, k, og.Object)
						}
					}
				}
			}
		})
	}
}
