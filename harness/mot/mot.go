// Package mot holds the vocabulary of multi-object tracking that every other
// trackgate package speaks: matrices, the linear-Gaussian model of a
// scenario, detections and scans, ground truth, and the estimates a tracker
// reports.
//
// It is the bottom layer of the project and imports nothing from it.
//
// # Conventions
//
//   - Steps are numbered from 0; the time of step k is k·Δt seconds, where Δt
//     is Model.Interval.
//   - Positions are in metres, velocities in metres per second, angles in
//     radians, times in seconds, in one Cartesian frame named by the scenario.
//   - Matrices are dense and row-major (Mat). Covariances are symmetric.
//   - Detection ids are non-negative integers, unique within a run; NoDetection
//     (−1) stands for a missed detection.
//   - Values are never mutated by a function that receives them unless its
//     name ends in To or its doc comment says so.
package mot

// NoDetection is the detection id that stands for "no detection": a missed
// detection, or a track that was not updated at a step.
const NoDetection = -1

// Mat is a dense, row-major matrix. The zero value is the empty 0×0 matrix.
type Mat struct {
	Rows, Cols int
	// Data holds Rows·Cols entries; entry (i, j) is Data[i*Cols+j].
	Data []float64
}

// NewMat returns a Rows×Cols matrix of zeros.
func NewMat(rows, cols int) Mat {
	return Mat{Rows: rows, Cols: cols, Data: make([]float64, rows*cols)}
}

// Identity returns the n×n identity matrix.
func Identity(n int) Mat {
	m := NewMat(n, n)
	for i := 0; i < n; i++ {
		m.Data[i*n+i] = 1
	}
	return m
}

// At returns entry (i, j).
func (m Mat) At(i, j int) float64 { return m.Data[i*m.Cols+j] }

// Set sets entry (i, j) to v.
func (m Mat) Set(i, j int, v float64) { m.Data[i*m.Cols+j] = v }

// Clone returns a deep copy of m.
func (m Mat) Clone() Mat {
	return Mat{Rows: m.Rows, Cols: m.Cols, Data: append([]float64(nil), m.Data...)}
}

// RowsOf returns m as a slice of rows (copies), the shape used in JSON and
// YAML files.
func (m Mat) RowsOf() [][]float64 {
	out := make([][]float64, m.Rows)
	for i := range out {
		out[i] = append([]float64(nil), m.Data[i*m.Cols:(i+1)*m.Cols]...)
	}
	return out
}

// MatFromRows builds a matrix from rows of equal length. It reports false if
// the rows are ragged.
func MatFromRows(rows [][]float64) (Mat, bool) {
	if len(rows) == 0 {
		return Mat{}, true
	}
	c := len(rows[0])
	m := NewMat(len(rows), c)
	for i, r := range rows {
		if len(r) != c {
			return Mat{}, false
		}
		copy(m.Data[i*c:], r)
	}
	return m, true
}

// Model is the linear-Gaussian model of one scenario, in the numbers a
// tracker uses directly:
//
//	x_{k+1} = F x_k + w_k,  w_k ~ N(0, Q)
//	z_k     = H x_k + v_k,  v_k ~ N(0, R)
//
// with detection probability PD and Poisson clutter of mean ClutterMean per
// scan, uniform over the box [ClutterMin, ClutterMax] in measurement space,
// so that the clutter intensity is λ = ClutterMean / V with V the box volume.
type Model struct {
	// StateDim is n, the length of the state vector x.
	StateDim int
	// MeasDim is m, the length of the measurement vector z.
	MeasDim int
	// Interval is Δt, the time between scans in seconds.
	Interval float64
	// F (n×n) is the state transition and Q (n×n) the process noise
	// covariance over one interval.
	F, Q Mat
	// H (m×n) is the measurement matrix and R (m×m) the measurement noise
	// covariance.
	H, R Mat
	// PD is the probability that an existing object is detected in a scan,
	// in (0, 1].
	PD float64
	// ClutterMean is the expected number of clutter detections per scan.
	ClutterMean float64
	// ClutterDensity is λ, the clutter intensity per unit volume of
	// measurement space (ClutterMean / V).
	ClutterDensity float64
	// ClutterMin and ClutterMax bound the box, in measurement space, over
	// which clutter is uniform.
	ClutterMin, ClutterMax []float64
	// GateProb is P_G, the probability that a gate of the reference tracker
	// contains the object's own detection; the gate threshold is the
	// chi-square quantile χ²_m⁻¹(P_G).
	GateProb float64
}

// Object is one object of a scenario: its id, its Gaussian prior at the step
// it appears, and the steps of its life [Appear, Disappear).
type Object struct {
	ID string
	// Mean (length n) and Cov (n×n) are the prior N(Mean, Cov) of the state
	// at step Appear.
	Mean []float64
	Cov  Mat
	// Appear is the first step at which the object exists.
	Appear int
	// Disappear is the first step at which it no longer exists; a value of
	// −1 means it lives to the end of the run.
	Disappear int
}

// Alive reports whether the object exists at step k.
func (o Object) Alive(k int) bool {
	return k >= o.Appear && (o.Disappear < 0 || k < o.Disappear)
}

// Detection is one measurement in a scan.
type Detection struct {
	// ID is unique within a run and never negative.
	ID int
	// Z is the measurement vector (length m).
	Z []float64
}

// Scan is what a sensor delivers at one step: the only input a tracker sees.
type Scan struct {
	Step int
	// Time is Step·Δt in seconds.
	Time       float64
	Detections []Detection
}

// Origin says where a simulated detection came from. It is part of the
// ground truth and never sent to a tracker.
type Origin struct {
	// Detection is the detection id.
	Detection int
	// Object is the id of the object that produced it, or "" for clutter.
	Object string
}

// TruthState is the true state of one object at one step.
type TruthState struct {
	Object string
	X      []float64
}

// Truth is the ground truth of one step: the states of the objects alive at
// that step and the origin of every detection in the step's scan.
type Truth struct {
	Step    int
	Objects []TruthState
	Origins []Origin
}

// Run is one simulated Monte Carlo run of a scenario.
type Run struct {
	// Index is the run number, from 0.
	Index int
	// Seed is the seed the run was simulated from.
	Seed  uint64
	Scans []Scan
	Truth []Truth
}

// Estimate is one track as a tracker reports it at one step.
type Estimate struct {
	// Track is the tracker's own name for the track.
	Track string
	// Mean is the state estimate (length n).
	Mean []float64
	// Cov is the state covariance (n×n), or a zero Mat when the tracker does
	// not report covariances.
	Cov Mat
	// Detection is the id of the detection the track was updated with at
	// this step, or NoDetection for a miss or when not reported; see
	// HasDetection.
	Detection int
	// HasDetection reports whether the tracker reported an association at
	// all for this track at this step.
	HasDetection bool
}

// Frame is a tracker's answer to one scan.
type Frame struct {
	Step   int
	Tracks []Estimate
}
