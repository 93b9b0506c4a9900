package sim

import (
	"trackgate/harness/mot"
	"trackgate/harness/scenario"
)

// cvModel returns the 2-D constant-velocity model with state [x, vx, y, vy],
// position measurements and the discrete white-noise acceleration Q
//
//	Q_axis = q·[[Δt⁴/4, Δt³/2], [Δt³/2, Δt²]]
//
// (Bar-Shalom, Li, Kirubarajan, Estimation with Applications to Tracking
// and Navigation, 2001, §6.3.2, from memory), which has rank 1 per axis.
func cvModel(dt, q, r float64) mot.Model {
	f := mot.Identity(4)
	f.Set(0, 1, dt)
	f.Set(2, 3, dt)
	qm := mot.NewMat(4, 4)
	for _, o := range []int{0, 2} {
		qm.Set(o, o, q*dt*dt*dt*dt/4)
		qm.Set(o, o+1, q*dt*dt*dt/2)
		qm.Set(o+1, o, q*dt*dt*dt/2)
		qm.Set(o+1, o+1, q*dt*dt)
	}
	h := mot.NewMat(2, 4)
	h.Set(0, 0, 1)
	h.Set(1, 2, 1)
	rm := mot.NewMat(2, 2)
	rm.Set(0, 0, r)
	rm.Set(1, 1, r)
	return mot.Model{StateDim: 4, MeasDim: 2, Interval: dt, F: f, Q: qm, H: h, R: rm, GateProb: 0.999}
}

// quayScene is an invented demo: three launches working a quay in a
// harbour basin seen by a shore radar, with sea clutter, one launch leaving
// early, one arriving late from a drawn start, and one scripted scan in
// which the radar reports a hand-placed pair of returns.
func quayScene() *scenario.Spec {
	md := cvModel(2, 0.04, 36)
	md.PD = 0.85
	md.ClutterMean = 4
	md.ClutterMin = []float64{-1500, -800}
	md.ClutterMax = []float64{1500, 800}
	md.ClutterDensity = md.ClutterMean / (3000 * 1600)
	cov := mot.NewMat(4, 4)
	for i, v := range []float64{100, 4, 100, 4} {
		cov.Set(i, i, v)
	}
	return &scenario.Spec{
		Name:   "quay-launches",
		Hash:   "00d1ce5eedfacade00d1ce5eedfacade00d1ce5eedfacade00d1ce5eedfacade",
		Format: scenario.FormatVersion,
		Seed:   20261201,
		Steps:  12,
		Runs:   3,
		Motion: scenario.Motion{Kind: scenario.ConstantVelocity, Axes: 2, AccelNoise: 0.04},
		Model:  md,
		Objects: []scenario.Object{
			{Object: mot.Object{ID: "pilot", Mean: []float64{-900, 6, 200, -1}, Cov: cov, Appear: 0, Disappear: -1}},
			{Object: mot.Object{ID: "tender", Mean: []float64{300, -3, -400, 2}, Cov: cov, Appear: 0, Disappear: 8}},
			{Object: mot.Object{ID: "workboat", Mean: []float64{0, 0, 600, -5}, Cov: cov, Appear: 4, Disappear: -1}, DrawStart: true},
		},
		Scripted: []scenario.ScriptedScan{{
			Step: 6,
			Detections: []scenario.ScriptedDetection{
				{Z: []float64{-830, 190}, Object: "pilot"},
				{Z: []float64{1200.5, -750.25}},
			},
		}},
	}
}
