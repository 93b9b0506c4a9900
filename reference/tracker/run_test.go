package tracker

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"trackgate/harness/mot"
)

// cvPlane is a 2-D constant-velocity model, state [x, vx, y, vy], with
// discrete white-noise acceleration of variance q per axis (Bar-Shalom,
// Li, Kirubarajan 2001, §6.3.2) and position measurements of variance r.
func cvPlane(T, q, r, pd, lambda float64) mot.Model {
	a, b, c := q*T*T*T*T/4, q*T*T*T/2, q*T*T
	return mot.Model{StateDim: 4, MeasDim: 2, Interval: T,
		F:  mot.Mat{Rows: 4, Cols: 4, Data: []float64{1, T, 0, 0, 0, 1, 0, 0, 0, 0, 1, T, 0, 0, 0, 1}},
		Q:  mot.Mat{Rows: 4, Cols: 4, Data: []float64{a, b, 0, 0, b, c, 0, 0, 0, 0, a, b, 0, 0, b, c}},
		H:  mot.Mat{Rows: 2, Cols: 4, Data: []float64{1, 0, 0, 0, 0, 0, 1, 0}},
		R:  mot.Mat{Rows: 2, Cols: 2, Data: []float64{r, 0, 0, r}},
		PD: pd, ClutterDensity: lambda, GateProb: 0.999,
	}
}

// simulate draws one run of the model for objects whose priors have
// diagonal covariances: the true start is drawn from the prior, the motion
// noise is Γ·√q·N(0,1) per axis (Γ = [T²/2, T]ᵀ), each object is detected
// with probability PD and measured with noise N(0, r·I). It is written
// here, independently of the project's simulator.
func simulate(rng *rand.Rand, md mot.Model, q, r float64, objs []mot.Object, steps, index int) (mot.Run, [][][]float64) {
	T := md.Interval
	run := mot.Run{Index: index}
	truth := make([][][]float64, steps) // [step][object]state
	xs := make([][]float64, len(objs))
	for i, o := range objs {
		xs[i] = make([]float64, 4)
		for j := range xs[i] {
			xs[i][j] = o.Mean[j] + math.Sqrt(o.Cov.At(j, j))*rng.NormFloat64()
		}
	}
	id := 0
	for k := 0; k < steps; k++ {
		if k > 0 {
			for _, x := range xs {
				for ax := 0; ax < 2; ax++ {
					w := math.Sqrt(q) * rng.NormFloat64()
					x[2*ax] += T*x[2*ax+1] + T*T/2*w
					x[2*ax+1] += T * w
				}
			}
		}
		scan := mot.Scan{Step: k, Time: float64(k) * T}
		truth[k] = make([][]float64, len(objs))
		for i, x := range xs {
			truth[k][i] = append([]float64(nil), x...)
			if rng.Float64() < md.PD {
				scan.Detections = append(scan.Detections, mot.Detection{ID: id,
					Z: []float64{x[0] + math.Sqrt(r)*rng.NormFloat64(), x[2] + math.Sqrt(r)*rng.NormFloat64()}})
				id++
			}
		}
		run.Scans = append(run.Scans, scan)
	}
	return run, truth
}

// TestConsistency checks the reference run with the NEES test of
// Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to Tracking
// and Navigation", 2001, §5.4.2: over N independent runs the sum of the
// normalised estimation errors εₖ = (x − x̂)ᵀ P⁻¹ (x − x̂) at step k is
// χ² with n·N degrees of freedom when the filter is consistent, so the
// average must fall inside [χ²_{nN}(α/2), χ²_{nN}(1 − α/2)]/N. The scene
// has three well-separated objects and no clutter, so association is not
// in doubt; NEES is computed with gonum's Cholesky (independent of the
// kalman package) and the band with gonum's chi-square quantile.
func TestConsistency(t *testing.T) {
	const q, r, runs, steps = 0.05, 4.0, 300, 25
	md := cvPlane(1, q, r, 0.9, 0)
	prior := mot.Mat{Rows: 4, Cols: 4, Data: []float64{9, 0, 0, 0, 0, 1, 0, 0, 0, 0, 9, 0, 0, 0, 0, 1}}
	objs := []mot.Object{
		{ID: "ferry", Mean: []float64{0, 3, 0, 0}, Cov: prior, Disappear: -1},
		{ID: "tender", Mean: []float64{0, 0, 500, -2}, Cov: prior, Disappear: -1},
		{ID: "pilot", Mean: []float64{-500, 1, -500, 1}, Cov: prior, Disappear: -1},
	}
	rng := rand.New(rand.NewPCG(20261201, 21))
	checkSteps := []int{0, 4, 12, 24}
	sums := make([]float64, len(checkSteps))
	for run := 0; run < runs; run++ {
		mr, truth := simulate(rng, md, q, r, objs, steps, run)
		ex, err := RunAll(Config{Model: md, Objects: objs, K: 3}, mr)
		if err != nil {
			t.Fatal(err)
		}
		if len(ex.Frames) != steps || len(ex.Steps) != steps || ex.Run != run {
			t.Fatalf("run %d: %d frames and %d steps, want %d", run, len(ex.Frames), len(ex.Steps), steps)
		}
		for c, k := range checkSteps {
			for i, tk := range ex.Frames[k].Tracks {
				var chol mat.Cholesky
				if !chol.Factorize(mat.NewSymDense(4, append([]float64(nil), tk.Cov.Data...))) {
					t.Fatalf("run %d step %d: covariance of %s not positive definite", run, k, tk.Track)
				}
				e := mat.NewVecDense(4, nil)
				for j := 0; j < 4; j++ {
					e.SetVec(j, truth[k][i][j]-tk.Mean[j])
				}
				var y mat.VecDense
				if err := chol.SolveVecTo(&y, e); err != nil {
					t.Fatal(err)
				}
				sums[c] += mat.Dot(e, &y)
			}
		}
	}
	samples := float64(runs * len(objs))
	band := distuv.ChiSquared{K: 4 * samples}
	lo, hi := band.Quantile(0.0005)/samples, band.Quantile(0.9995)/samples
	for c, k := range checkSteps {
		if avg := sums[c] / samples; avg < lo || avg > hi {
			t.Errorf("step %d: average NEES %.4f outside the 99.9%% band [%.4f, %.4f]", k, avg, lo, hi)
		} else {
			t.Logf("step %d: average NEES %.4f in [%.4f, %.4f]", k, avg, lo, hi)
		}
	}
}
