package driver

import (
	"context"
	"math"
	"os/exec"
	"path/filepath"
	"testing"
	"time"

	"trackgate/harness/scenario"
	"trackgate/harness/sim"
)

// TestPythonExample drives the example tracker harness/examples/nearest.py
// (standard library only) when python3 is installed.
func TestPythonExample(t *testing.T) {
	py, err := exec.LookPath("python3")
	if err != nil {
		t.Skip("python3 not on PATH; skipping the Python example tracker")
	}
	script, _ := filepath.Abs(filepath.Join("..", "examples", "nearest.py"))
	cfg := Config{Argv: []string{py, script}, ReplyTimeout: 20 * time.Second, Grace: time.Second}
	jobs := []Job{warehouseJob(0, 6), warehouseJob(1, 4)}
	for _, batch := range []bool{false, true} {
		cfg.Batch = batch
		results := RunMany(context.Background(), cfg, jobs, 1)
		for r, res := range results {
			if res.Fault != nil {
				t.Fatalf("batch %v run %d: %v", batch, r, res.Fault)
			}
			if res.Tracker.Name != "nearest-example" || len(res.Frames) != len(jobs[r].Run.Scans) {
				t.Fatalf("batch %v run %d: tracker %q with %d frames", batch, r, res.Tracker.Name, len(res.Frames))
			}
			// With no clutter, each object's own detection is the nearest:
			// the forklift made the even ids and the cart (from step 1) the
			// odd ones.
			for k, f := range res.Frames {
				want := 1 + min(k, 1)
				if len(f.Tracks) != want {
					t.Fatalf("run %d step %d: %d tracks, want %d", r, k, len(f.Tracks), want)
				}
				for i, tr := range f.Tracks {
					if tr.Detection != 2*k+i {
						t.Errorf("run %d step %d: track %s took detection %d, want %d", r, k, tr.Track, tr.Detection, 2*k+i)
					}
				}
			}
		}
		// Step 0 of run 0: prior N([2, 1, 3, 0], I), H picks x and y,
		// R = 0.04·I and z = (2, 3) equal to the predicted measurement, so
		// the mean stays put and the position variance becomes
		// P − P²/(P + R) = 1 − 1/1.04 = 0.04/1.04, the velocity variance
		// stays 1 (no correlation in the prior). Kalman update
		// P⁺ = (I − KH)P with K = PHᵀ(HPHᵀ + R)⁻¹: Y. Bar-Shalom, X. R. Li,
		// T. Kirubarajan, Estimation with Applications to Tracking and
		// Navigation, Wiley, 2001, §5.2 (section number from memory).
		tr := results[0].Frames[0].Tracks[0]
		for i, want := range []float64{2, 1, 3, 0} {
			if tr.Mean[i] != want {
				t.Errorf("step 0 mean[%d] = %v, want %v", i, tr.Mean[i], want)
			}
		}
		if got, want := tr.Cov.At(0, 0), 0.04/1.04; math.Abs(got-want) > 1e-12 {
			t.Errorf("step 0 position variance = %v, want %v", got, want)
		}
		if got := tr.Cov.At(1, 1); got != 1 {
			t.Errorf("step 0 velocity variance = %v, want 1", got)
		}
	}

	// Two stock scenarios with clutter and misses pass every check.
	cfg.Batch = false
	for _, name := range []string{"crossing-harbour-vessels.yaml", "clutter-fishing-grounds.yaml"} {
		spec, err := scenario.Load(filepath.Join("..", "..", "scenarios", name))
		if err != nil {
			t.Fatal(err)
		}
		res := Run(context.Background(), cfg, JobFor(spec, sim.Run(spec, 0)))
		if res.Fault != nil || len(res.Frames) != spec.Steps {
			t.Errorf("%s: %d frames of %d, fault %v", name, len(res.Frames), spec.Steps, res.Fault)
		}
	}
}
