package sim

import (
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"trackgate/harness/mot"
	"trackgate/harness/scenario"
)

// warehouseScene is an invented demo: forklifts drifting on a warehouse
// floor (a 3-D random walk: x, y and a fork height), seen by a ceiling
// sensor that measures x and height with correlated noise, among reflections
// off shelving. Many objects and steps make it a good sample for the
// statistical tests.
func warehouseScene(clutterMean float64) *scenario.Spec {
	q := mot.Mat{Rows: 3, Cols: 3, Data: []float64{
		2.5, 0.4, -0.3,
		0.4, 1.2, 0.25,
		-0.3, 0.25, 0.8,
	}}
	h := mot.Mat{Rows: 2, Cols: 3, Data: []float64{1, 0, 0, 0, 0, 1}}
	r := mot.Mat{Rows: 2, Cols: 2, Data: []float64{0.36, 0.12, 0.12, 0.16}}
	md := mot.Model{
		StateDim: 3, MeasDim: 2, Interval: 0.5,
		F: mot.Identity(3), Q: q, H: h, R: r,
		PD: 0.73, ClutterMean: clutterMean,
		ClutterMin: []float64{-40, 0}, ClutterMax: []float64{60, 6},
		GateProb: 0.999,
	}
	spec := &scenario.Spec{
		Name: "warehouse-forklifts", Format: scenario.FormatVersion,
		Seed: 771, Steps: 150, Runs: 40,
		Motion: scenario.Motion{Kind: scenario.RandomWalk, Axes: 3, Noise: q},
		Model:  md,
	}
	for i := range 6 {
		spec.Objects = append(spec.Objects, scenario.Object{Object: mot.Object{
			ID: fmt.Sprintf("lift%d", i), Mean: []float64{float64(10 * i), float64(-5 * i), 1},
			Cov: mot.Identity(3), Appear: 3 * i, Disappear: -1,
		}, DrawStart: i%2 == 0})
	}
	return spec
}

// simulateAll runs every run of spec.
func simulateAll(t *testing.T, spec *scenario.Spec) []mot.Run {
	t.Helper()
	spec.Seed = seedFor(t, spec.Seed)
	s, err := Prepare(spec)
	if err != nil {
		t.Fatalf("Prepare: %v", err)
	}
	runs := make([]mot.Run, spec.Runs)
	for r := range runs {
		runs[r] = s.Run(r)
	}
	return runs
}

// covarianceFit tests zero-mean samples (rows of xs) against the
// covariance c:
//
//   - element by element: the known-mean sample covariance
//     S_ij = (1/N) Σ x_i x_j has mean c_ij and variance (c_ij² + c_ii c_jj)/N,
//     which follows from Isserlis' theorem E[x_i x_j x_i x_j] =
//     c_ii c_jj + 2 c_ij² (L. Isserlis, "On a formula for the product-moment
//     coefficient of any order of a normal frequency distribution in any
//     number of variables", Biometrika 12:134–139, 1918); NS is
//     Wishart(c, N) (T. W. Anderson, An Introduction to Multivariate
//     Statistical Analysis, 3rd ed., 2003, ch. 7, from memory). The z values
//     use a Bonferroni split of alpha over the d(d+1)/2 distinct entries;
//   - as a whole: with c = L Lᵀ (gonum Cholesky), Σ ‖L⁻¹x‖² is χ² with N·d
//     degrees of freedom, tested two-sided at alpha.
func covarianceFit(t *testing.T, what string, xs [][]float64, c mot.Mat) {
	t.Helper()
	d := c.Rows
	n := float64(len(xs))
	if len(xs) < 1000 {
		t.Fatalf("%s: only %d samples", what, len(xs))
	}
	s := make([]float64, d*d)
	for _, x := range xs {
		for i := range d {
			for j := range d {
				s[i*d+j] += x[i] * x[j]
			}
		}
	}
	level := alpha / float64(d*(d+1)/2)
	for i := range d {
		for j := 0; j <= i; j++ {
			sij := s[i*d+j] / n
			cij := c.At(i, j)
			sd := math.Sqrt((cij*cij + c.At(i, i)*c.At(j, j)) / n)
			twoSidedZ(t, fmt.Sprintf("%s: S[%d][%d] = %.5g against %.5g", what, i, j, sij, cij), (sij-cij)/sd, level)
		}
	}
	var ch mat.Cholesky
	if !ch.Factorize(mat.NewSymDense(d, append([]float64(nil), c.Data...))) {
		t.Fatalf("%s: covariance not positive definite", what)
	}
	var l mat.TriDense
	ch.LTo(&l)
	var sum float64
	y := mat.NewVecDense(d, nil)
	for _, x := range xs {
		if err := y.SolveVec(&l, mat.NewVecDense(d, append([]float64(nil), x...))); err != nil {
			t.Fatalf("%s: whitening: %v", what, err)
		}
		sum += mat.Dot(y, y)
	}
	chiSquareTwoSided(t, what+": whitened sum of squares", sum, n*float64(d), alpha)
}

// objectIndex maps object ids to their index in spec.Objects.
func objectIndex(spec *scenario.Spec) map[string]int {
	m := map[string]int{}
	for i, o := range spec.Objects {
		m[o.ID] = i
	}
	return m
}

// TestProcessNoise checks w_k = x_{k+1} − F x_k against N(0, Q) for a full
// (non-singular) Q; see covarianceFit.
func TestProcessNoise(t *testing.T) {
	spec := warehouseScene(2)
	var ws [][]float64
	for _, run := range simulateAll(t, spec) {
		prev := map[string][]float64{}
		for _, tr := range run.Truth {
			for _, o := range tr.Objects {
				if p, ok := prev[o.Object]; ok {
					w := make([]float64, 3)
					for i := range w {
						w[i] = o.X[i] - p[i] // F = I
					}
					ws = append(ws, w)
				}
				prev[o.Object] = o.X
			}
		}
	}
	covarianceFit(t, "process noise", ws, spec.Model.Q)
}

// TestProcessNoiseSingular checks the constant-velocity model's rank-one
// per-axis noise: with w = x_{k+1} − F x_k, the discrete white-noise
// acceleration model gives w = [Δt²/2, Δt]ᵀ a with a ~ N(0, q) per axis
// (Bar-Shalom, Li, Kirubarajan 2001, §6.3.2, from memory), so
// w_pos = (Δt/2)·w_vel exactly (to rounding), and Σ w_vel²/(qΔt²) is χ²
// with one degree of freedom per sample.
func TestProcessNoiseSingular(t *testing.T) {
	const dt, q = 2.0, 0.04
	spec := quayScene()
	spec.Scripted = nil
	spec.Steps = 400
	spec.Runs = 20
	spec.Model = cvModel(dt, q, 36)
	spec.Model.PD = 0.5
	var sum float64
	var count int
	for _, run := range simulateAll(t, spec) {
		prev := map[string][]float64{}
		for _, tr := range run.Truth {
			for _, o := range tr.Objects {
				if p, ok := prev[o.Object]; ok {
					for _, ax := range []int{0, 2} {
						wp := o.X[ax] - (p[ax] + dt*p[ax+1])
						wv := o.X[ax+1] - p[ax+1]
						// Rounding: positions are up to about 10⁴ m.
						if math.Abs(wp-dt/2*wv) > 1e-9*(1+math.Abs(o.X[ax])) {
							t.Fatalf("run %d step %d %s axis %d: w_pos = %v, want Δt/2·w_vel = %v", run.Index, tr.Step, o.Object, ax, wp, dt/2*wv)
						}
						sum += wv * wv / (q * dt * dt)
						count++
					}
				}
				prev[o.Object] = o.X
			}
		}
	}
	chiSquareTwoSided(t, "velocity noise", sum, float64(count), alpha)
}

// TestMeasurementNoise checks v = z − H x of every object-originated
// detection against N(0, R); see covarianceFit.
func TestMeasurementNoise(t *testing.T) {
	spec := warehouseScene(2)
	var vs [][]float64
	for _, run := range simulateAll(t, spec) {
		for k, tr := range run.Truth {
			states := map[string][]float64{}
			for _, o := range tr.Objects {
				states[o.Object] = o.X
			}
			for i, og := range tr.Origins {
				if og.Object == "" {
					continue
				}
				x := states[og.Object]
				z := run.Scans[k].Detections[i].Z
				vs = append(vs, []float64{z[0] - x[0], z[1] - x[2]})
			}
		}
	}
	covarianceFit(t, "measurement noise", vs, spec.Model.R)
}

// TestDetectionFraction checks the share of living object-steps that were
// detected against PD with the normal approximation of the binomial,
// z = (d − Np)/√(Np(1−p)) (the de Moivre–Laplace theorem; W. Feller, An
// Introduction to Probability Theory and Its Applications, Vol. 1, 3rd
// ed., 1968, ch. VII, from memory).
func TestDetectionFraction(t *testing.T) {
	spec := warehouseScene(2)
	var alive, detected float64
	for _, run := range simulateAll(t, spec) {
		for _, tr := range run.Truth {
			alive += float64(len(tr.Objects))
			for _, og := range tr.Origins {
				if og.Object != "" {
					detected++
				}
			}
		}
	}
	p := spec.Model.PD
	twoSidedZ(t, fmt.Sprintf("detected %v of %v", detected, alive), (detected-alive*p)/math.Sqrt(alive*p*(1-p)), alpha)
}

// TestClutter checks the clutter of every scan: the count per scan against
// Poisson(ClutterMean) (see poissonFit), every position inside the box, each
// coordinate uniform by the Kolmogorov–Smirnov test (Kolmogorov 1933;
// N. Smirnov, "Table for estimating the goodness of fit of empirical
// distributions", Ann. Math. Stat. 19:279–281, 1948) with the limiting
// distribution's 0.999 point, and the joint law uniform over a 10×10 grid
// of cells by Pearson's χ² (1900) with 99 degrees of freedom.
func TestClutter(t *testing.T) {
	for _, mean := range []float64{2.75, 31} {
		t.Run(fmt.Sprint(mean), func(t *testing.T) {
			spec := warehouseScene(mean)
			md := spec.Model
			var counts []int
			var us [2][]float64
			var grid [100]float64
			for _, run := range simulateAll(t, spec) {
				for k, tr := range run.Truth {
					c := 0
					for i, og := range tr.Origins {
						if og.Object != "" {
							continue
						}
						c++
						z := run.Scans[k].Detections[i].Z
						var cell int
						for j := range 2 {
							if !(z[j] >= md.ClutterMin[j] && z[j] <= md.ClutterMax[j]) {
								t.Fatalf("run %d step %d: clutter %v outside the box", run.Index, k, z)
							}
							u := (z[j] - md.ClutterMin[j]) / (md.ClutterMax[j] - md.ClutterMin[j])
							us[j] = append(us[j], u)
							cell = cell*10 + min(int(u*10), 9)
						}
						grid[cell]++
					}
					counts = append(counts, c)
				}
			}
			poissonFit(t, "clutter count", counts, mean)
			crit := kolmogorovQuantile(1 - alpha)
			for j := range 2 {
				if ks := ksUniform(us[j]); ks > crit {
					t.Errorf("clutter coordinate %d: √n·D = %.4f above the %g point %.4f (n = %d)", j, ks, 1-alpha, crit, len(us[j]))
				} else {
					t.Logf("clutter coordinate %d: √n·D = %.4f (critical %.4f, n = %d)", j, ks, crit, len(us[j]))
				}
			}
			total := float64(len(us[0]))
			var chi float64
			for _, o := range grid {
				e := total / 100
				chi += (o - e) * (o - e) / e
			}
			if crit := (distuv.ChiSquared{K: 99}).Quantile(1 - alpha); chi > crit {
				t.Errorf("clutter grid: χ² = %.2f above the %g point %.2f", chi, 1-alpha, crit)
			}
		})
	}
}

// TestShuffleHidesOrigin checks that a scan's order says nothing about
// where its detections came from: the first detection of a scan with T
// detections of which o come from objects is an object's with probability
// o/T, so the count of such scans minus Σ o/T is, by the central limit
// theorem for independent Bernoulli trials (Lyapunov), normal with variance
// Σ (o/T)(1 − o/T). Also checked: the ids of a run are 0, 1, 2, … in scan
// order and step order.
func TestShuffleHidesOrigin(t *testing.T) {
	spec := warehouseScene(2.75)
	var hits, expect, variance float64
	for _, run := range simulateAll(t, spec) {
		next := 0
		for k, sc := range run.Scans {
			for i, d := range sc.Detections {
				if d.ID != next || run.Truth[k].Origins[i].Detection != d.ID {
					t.Fatalf("run %d step %d detection %d: id %d, origin for %d, want %d", run.Index, k, i, d.ID, run.Truth[k].Origins[i].Detection, next)
				}
				next++
			}
			n := len(sc.Detections)
			if n == 0 {
				continue
			}
			var o float64
			for _, og := range run.Truth[k].Origins {
				if og.Object != "" {
					o++
				}
			}
			p := o / float64(n)
			expect += p
			variance += p * (1 - p)
			if run.Truth[k].Origins[0].Object != "" {
				hits++
			}
		}
	}
	twoSidedZ(t, "first detection from an object", (hits-expect)/math.Sqrt(variance), alpha)
}
