package sim_test

import (
	"fmt"
	"os"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
	"trackgate/harness/sim"
)

// A canal lock keeper's camera watches one barge creep along the lock
// chamber: a 1-D constant-velocity object, no clutter.
func Example() {
	f := mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 1, 0, 1}}
	q := mot.Mat{Rows: 2, Cols: 2, Data: []float64{0.0025, 0.005, 0.005, 0.01}}
	spec := &scenario.Spec{
		Name: "lock-barge", Seed: 1234567, Steps: 3, Runs: 1,
		Model: mot.Model{
			StateDim: 2, MeasDim: 1, Interval: 1, F: f, Q: q,
			H:  mot.Mat{Rows: 1, Cols: 2, Data: []float64{1, 0}},
			R:  mot.Mat{Rows: 1, Cols: 1, Data: []float64{0.04}},
			PD: 1,
		},
		Objects: []scenario.Object{{Object: mot.Object{ID: "barge", Mean: []float64{0, 0.5}, Disappear: -1}}},
	}
	s, err := sim.Prepare(spec)
	if err != nil {
		fmt.Println(err)
		return
	}
	run := s.Run(0)
	for k, sc := range run.Scans {
		// With PD = 1 and no clutter every scan holds exactly the barge's
		// detection, numbered on through the run.
		fmt.Printf("step %d at %v s: %d object(s), detection %d from %q\n",
			k, sc.Time, len(run.Truth[k].Objects), sc.Detections[0].ID, run.Truth[k].Origins[0].Object)
	}
	// The header names the run seed: the first SplitMix64 output from the
	// scenario seed 1234567 (Rosetta Code's published value).
	header := sim.Record{Scenario: spec.Name, Run: mot.Run{Index: 0, Seed: run.Seed}}
	if err := sim.Write(os.Stdout, header); err != nil {
		fmt.Println(err)
	}
	// Output:
	// step 0 at 0 s: 1 object(s), detection 0 from "barge"
	// step 1 at 1 s: 1 object(s), detection 1 from "barge"
	// step 2 at 2 s: 1 object(s), detection 2 from "barge"
	// {"kind":"trackgate-simulation","version":1,"scenario":"lock-barge","hash":"","run":0,"seed":6457827717110365317,"steps":0}
}

func ExampleRunSeed() {
	// The seeds of the first three runs of a scenario with seed 1234567:
	// the first SplitMix64 outputs from that state.
	for r := range 3 {
		fmt.Println(sim.RunSeed(1234567, r))
	}
	// Output:
	// 6457827717110365317
	// 3203168211198807973
	// 9817491932198370423
}
