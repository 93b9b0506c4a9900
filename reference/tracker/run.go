package tracker

import (
	"fmt"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
)

// Expected is the reference run over one simulated run: per step the frame
// the reference reports and the detail behind it.
type Expected struct {
	// Run and Seed identify the simulated run.
	Run    int
	Seed   uint64
	Frames []mot.Frame
	Steps  []Detail
}

// RunAll runs the reference tracker of cfg over every scan of run.
func RunAll(cfg Config, run mot.Run) (Expected, error) {
	t := New(cfg)
	ex := Expected{Run: run.Index, Seed: run.Seed,
		Frames: make([]mot.Frame, 0, len(run.Scans)), Steps: make([]Detail, 0, len(run.Scans))}
	for _, scan := range run.Scans {
		fr, d, err := t.Step(scan)
		if err != nil {
			return Expected{}, fmt.Errorf("run %d: %w", run.Index, err)
		}
		ex.Frames = append(ex.Frames, fr)
		ex.Steps = append(ex.Steps, d)
	}
	return ex, nil
}

// ConfigFor returns the configuration of the reference run for a loaded
// scenario, with k hypotheses per scan (0 means DefaultK).
func ConfigFor(spec *scenario.Spec, k int) Config {
	objects := make([]mot.Object, len(spec.Objects))
	for i, o := range spec.Objects {
		objects[i] = o.Object
	}
	return Config{Model: spec.Model, Objects: objects, K: k}
}
