package scenario_test

import (
	"fmt"

	"trackgate/harness/scenario"
)

func ExampleParse() {
	data := []byte(`format: 1
name: pier-skiff
description: One skiff leaving a pier, seen by a harbour camera.
seed: 5
steps: 20
interval: 2
motion: {kind: constant-velocity, axes: 2, accel-noise: 0.5}
sensor: {noise: [4, 4]}
detection-probability: 0.9
clutter:
  region: {min: [0, 0], max: [100, 40]}
  mean-count: 2
objects:
  - id: skiff
    prior: {mean: [0, 3, 10, 0], cov: [1, 1, 1, 1]}
`)
	s, err := scenario.Parse("pier-skiff.yaml", data)
	if err != nil {
		fmt.Println(err)
		return
	}
	m := s.Model
	fmt.Println("state", m.StateDim, "measurement", m.MeasDim)
	// Constant velocity, Δt = 2: F[0][1] = Δt; DWNA Q[0][0] = q·Δt⁴/4 = 0.5·4.
	fmt.Println("F[0][1] =", m.F.At(0, 1), "Q[0][0] =", m.Q.At(0, 0))
	// λ = mean count / box volume = 2 / (100·40).
	fmt.Println("clutter density", m.ClutterDensity, "gate", m.GateProb)
	fmt.Println("object", s.Objects[0].ID, "disappears", s.Objects[0].Disappear)
	// Output:
	// state 4 measurement 2
	// F[0][1] = 2 Q[0][0] = 2
	// clutter density 0.0005 gate 0.999
	// object skiff disappears -1
}

func ExampleParse_errors() {
	data := []byte(`format: 1
name: pier-skiff
description: Two mistakes.
seed: 5
steps: 20
interval: 2
motion: {kind: constant-velocity, axes: 2, accel-noise: 0.5}
sensor: {noise: [4, 4]}
detection-probability: 1.2
objects:
  - id: skiff
    prior: {mean: [0, 3, 10], cov: [1, 1, 1, 1]}
`)
	_, err := scenario.Parse("pier-skiff.yaml", data)
	fmt.Println(err)
	// Output:
	// pier-skiff.yaml:9:24: detection-probability: 1.2 is outside (0, 1]; expected a probability greater than 0 and at most 1
	// pier-skiff.yaml:12:19: objects[0].prior.mean: has 3 entries; expected 4 (the state dimension of the motion model)
}
