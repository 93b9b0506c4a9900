package scenario

import "trackgate/harness/mot"

// FormatVersion is the scenario file format version this package reads.
const FormatVersion = 1

// Spec is a loaded, validated scenario: everything the simulator and the
// reference tracker need, with the model already turned into numbers.
type Spec struct {
	// File is the path the scenario was loaded from ("" when built in code).
	File string
	// Hash is the hex SHA-256 of the file's bytes: the scenario's content
	// hash recorded in golden files.
	Hash        string
	Format      int
	Name        string
	Description string
	// Seed is the scenario seed; run r is simulated from sim.RunSeed(Seed, r).
	Seed uint64
	// Steps is the number of scans in a run.
	Steps int
	// Runs is the number of Monte Carlo runs.
	Runs int
	// Motion is the motion model as declared; Model.F and Model.Q are
	// derived from it.
	Motion Motion
	// Model is the linear-Gaussian model in numbers.
	Model   mot.Model
	Objects []Object
	// Scripted scans replace the simulated scan at their step.
	Scripted []ScriptedScan
}

// MotionKind names a motion model.
type MotionKind string

// The motion models of format version 1.
const (
	RandomWalk       MotionKind = "random-walk"
	ConstantVelocity MotionKind = "constant-velocity"
	ConstantTurn     MotionKind = "constant-turn"
)

// Motion is a motion model as the scenario file declares it.
type Motion struct {
	Kind MotionKind
	// Axes is the number of spatial axes (constant velocity: 1 to 3;
	// constant turn: 2) or the state dimension (random walk).
	Axes int
	// AccelNoise is q, the variance of the discrete white-noise
	// acceleration in m²/s⁴ (constant velocity and constant turn).
	AccelNoise float64
	// TurnRate is ω in rad/s (constant turn).
	TurnRate float64
	// Noise is the random walk's per-interval process covariance (Axes×Axes).
	Noise mot.Mat
}

// Object is one object of the scenario.
type Object struct {
	mot.Object
	// DrawStart reports whether each run's true initial state is drawn from
	// the prior (true) or is the prior mean (false).
	DrawStart bool
}

// ScriptedScan is an explicit detection list for one step.
type ScriptedScan struct {
	Step       int
	Detections []ScriptedDetection
}

// ScriptedDetection is one hand-placed detection.
type ScriptedDetection struct {
	Z []float64
	// Object names the object it is attributed to in the truth record, or
	// "" for clutter.
	Object string
}
