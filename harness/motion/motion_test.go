package motion

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"trackgate/harness/mot"
)

// matNear reports the largest |got−want| over all entries, failing the test
// when it exceeds tol or the shapes differ.
func matNear(t *testing.T, name string, got mot.Mat, want [][]float64, tol float64) {
	t.Helper()
	if got.Rows != len(want) || got.Cols != len(want[0]) {
		t.Fatalf("%s is %d×%d, want %d×%d", name, got.Rows, got.Cols, len(want), len(want[0]))
	}
	for i := range want {
		for j := range want[i] {
			if d := math.Abs(got.At(i, j) - want[i][j]); d > tol {
				t.Errorf("%s[%d][%d] = %.15g, want %.15g (|diff| %.3g > tol %.3g)", name, i, j, got.At(i, j), want[i][j], d, tol)
			}
		}
	}
}

func TestConstantVelocityDWNA(t *testing.T) {
	// Source: Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to
	// Tracking and Navigation", 2001, §6.3.2, eq. 6.3.2-4:
	// Q = σ_v²·[[T⁴/4, T³/2], [T³/2, T²]], F = [[1, T], [0, 1]]. The numeric
	// values are that closed form evaluated by hand (they match the table in
	// the project's CHECK-VALUES §8.1).
	tests := []struct {
		name string
		dt   float64
		q    float64
		f, Q [][]float64
	}{
		{"T=1", 1, 1, [][]float64{{1, 1}, {0, 1}}, [][]float64{{0.25, 0.5}, {0.5, 1}}},
		{"T=0.5", 0.5, 1, [][]float64{{1, 0.5}, {0, 1}}, [][]float64{{0.015625, 0.0625}, {0.0625, 0.25}}},
		{"T=2", 2, 1, [][]float64{{1, 2}, {0, 1}}, [][]float64{{4, 4}, {4, 4}}},
		{"T=2 q=0.05", 2, 0.05, [][]float64{{1, 2}, {0, 1}}, [][]float64{{0.2, 0.2}, {0.2, 0.2}}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			F, Q := ConstantVelocity(1, tc.dt, tc.q)
			matNear(t, "F", F, tc.f, 0)
			matNear(t, "Q", Q, tc.Q, 1e-15)
		})
	}
}

func TestConstantVelocityAxesStackBlocks(t *testing.T) {
	// Source: CHECK-VALUES §8.3 (independent axes stacked, state order
	// [x, vx, y, vy]): with T = 1 and unit variance F₂ and Q₂ are block
	// diagonal copies of the 1-D matrices of Bar-Shalom et al. 2001, §6.3.2.
	F, Q := ConstantVelocity(2, 1, 1)
	matNear(t, "F", F, [][]float64{{1, 1, 0, 0}, {0, 1, 0, 0}, {0, 0, 1, 1}, {0, 0, 0, 1}}, 0)
	matNear(t, "Q", Q, [][]float64{{.25, .5, 0, 0}, {.5, 1, 0, 0}, {0, 0, .25, .5}, {0, 0, .5, 1}}, 0)

	F3, Q3 := ConstantVelocity(3, 0.5, 2)
	F1, Q1 := ConstantVelocity(1, 0.5, 2)
	for i := 0; i < 6; i++ {
		for j := 0; j < 6; j++ {
			var wf, wq float64
			if i/2 == j/2 {
				wf, wq = F1.At(i%2, j%2), Q1.At(i%2, j%2)
			}
			if F3.At(i, j) != wf || Q3.At(i, j) != wq {
				t.Errorf("3-D entry (%d,%d) = (%g, %g), want the 1-D block value (%g, %g)", i, j, F3.At(i, j), Q3.At(i, j), wf, wq)
			}
		}
	}
}

func TestConstantTurnCheckValues(t *testing.T) {
	// Source: the known-turn-rate F of Bar-Shalom et al. 2001, §11.7.1, and
	// Li & Jilkov, "Survey of maneuvering target tracking. Part I", IEEE TAES
	// 2003, §V; numbers from CHECK-VALUES §8.4, computed there with numpy.
	F, _ := ConstantTurn(1, 0.1, 0)
	matNear(t, "F(0.1, 1)", F, [][]float64{
		{1, 0.998334166468, 0, -0.049958347220},
		{0, 0.995004165278, 0, -0.099833416647},
		{0, 0.049958347220, 1, 0.998334166468},
		{0, 0.099833416647, 0, 0.995004165278},
	}, 1e-12)
	x := apply(F, []float64{0, 10, 0, 0})
	want := []float64{9.983341664683, 9.950041652780, 0.499583472197, 0.998334166468}
	for i := range want {
		if math.Abs(x[i]-want[i]) > 1e-11 {
			t.Errorf("F(0.1,1)·[0,10,0,0] [%d] = %.12f, want %.12f", i, x[i], want[i])
		}
	}

	g := 2 / math.Pi
	Fq, _ := ConstantTurn(1, math.Pi/2, 0)
	matNear(t, "F(π/2, 1)", Fq, [][]float64{{1, g, 0, -g}, {0, 0, 0, -1}, {0, g, 1, g}, {0, 1, 0, 0}}, 1e-15)
	// Four quarter turns close the circle: F(π/2, 1)⁴ = I (CHECK-VALUES §8.4).
	P := mot.Identity(4)
	for range 4 {
		P = mul(Fq, P)
	}
	matNear(t, "F(π/2,1)⁴", P, mot.Identity(4).RowsOf(), 1e-15)
}

func TestConstantTurnZeroRateIsConstantVelocity(t *testing.T) {
	// The ω → 0 limit of F(ω) is the constant-velocity F (Bar-Shalom et al.
	// 2001, §11.7.1; CHECK-VALUES §8.4). At ω = 0 the two must be identical;
	// near 0 the difference is about |ω|·T for the velocity entries (sin ωT)
	// and |ω|·T²/2 for the position entries ((1 − cos ωT)/ω).
	for _, dt := range []float64{0.1, 1, 4} {
		Fcv, Qcv := ConstantVelocity(2, dt, 0.3)
		Fct, Qct := ConstantTurn(dt, 0, 0.3)
		matNear(t, "CT(ω=0) F", Fct, Fcv.RowsOf(), 0)
		matNear(t, "CT(ω=0) Q", Qct, Qcv.RowsOf(), 0)
		for _, w := range []float64{1e-12, -1e-9, 1e-6, -1e-4, 1e-4, 1e-3} {
			F, Q := ConstantTurn(dt, w, 0.3)
			matNear(t, "CT(small ω) F", F, Fcv.RowsOf(), 1.01*math.Abs(w)*max(dt, dt*dt/2)+1e-15)
			matNear(t, "CT(small ω) Q", Q, Qcv.RowsOf(), 0)
		}
	}
}

func TestSincSwitchIsContinuous(t *testing.T) {
	// The series 1 − u²/6 + u⁴/120 and sin(u)/u must agree where the code
	// switches between them (|u| = 1e-4): their difference there is the
	// truncated term u⁶/5040 ≈ 2e-28 plus rounding (common practice: check
	// both sides of a branch point).
	for _, u := range []float64{1e-4, math.Nextafter(1e-4, 0), -1e-4, 3e-5, 2e-4} {
		got := sinc(u)
		want := math.Sin(u) / u
		if math.Abs(got-want) > 2e-16 {
			t.Errorf("sinc(%g) = %.17g, sin(u)/u = %.17g", u, got, want)
		}
	}
	if sinc(0) != 1 {
		t.Errorf("sinc(0) = %g, want 1", sinc(0))
	}
}

// TestConstantTurnMatchesIntegratedTurn compares repeated application of F
// with an independent numerical integration of the coordinated-turn ODE
// ẋ = vx, ẏ = vy, v̇x = −ω·vy, v̇y = ω·vx (Li & Jilkov 2003, §V) by
// classical Runge–Kutta, and the velocity with a rotation by n·ω·T built
// directly from math.Sincos.
func TestConstantTurnMatchesIntegratedTurn(t *testing.T) {
	for _, tc := range []struct{ dt, omega float64 }{{1, 0.03}, {0.5, -0.2}, {2, 0.7}, {1, 2e-5}} {
		F, _ := ConstantTurn(tc.dt, tc.omega, 0)
		x := []float64{120, 7, -40, 3}
		y := append([]float64(nil), x...)
		const steps = 9
		for range steps {
			x = apply(F, x)
			y = rk4Turn(y, tc.omega, tc.dt, 400)
		}
		for i := range x {
			if math.Abs(x[i]-y[i]) > 1e-9*(1+math.Abs(y[i])) {
				t.Errorf("ω=%g T=%g: F⁹x[%d] = %.12f, integrated ODE %.12f", tc.omega, tc.dt, i, x[i], y[i])
			}
		}
		s, c := math.Sincos(steps * tc.omega * tc.dt)
		vx, vy := c*7-s*3, s*7+c*3
		if math.Abs(x[1]-vx) > 1e-12 || math.Abs(x[3]-vy) > 1e-12 {
			t.Errorf("ω=%g T=%g: velocity after %d steps = (%.15g, %.15g), rotation gives (%.15g, %.15g)", tc.omega, tc.dt, steps, x[1], x[3], vx, vy)
		}
		if d := math.Hypot(x[1], x[3]) - math.Hypot(7, 3); math.Abs(d) > 1e-12 {
			t.Errorf("speed changed by %g over the turn", d)
		}
	}
}

func rk4Turn(x []float64, w, T float64, n int) []float64 {
	f := func(s []float64) []float64 { return []float64{s[1], -w * s[3], s[3], w * s[1]} }
	h := T / float64(n)
	for range n {
		k1 := f(x)
		k2 := f(axpy(x, h/2, k1))
		k3 := f(axpy(x, h/2, k2))
		k4 := f(axpy(x, h, k3))
		for i := range x {
			x[i] += h / 6 * (k1[i] + 2*k2[i] + 2*k3[i] + k4[i])
		}
	}
	return x
}

func axpy(x []float64, a float64, y []float64) []float64 {
	out := make([]float64, len(x))
	for i := range x {
		out[i] = x[i] + a*y[i]
	}
	return out
}

// TestDWNAMonteCarlo checks Q against a Monte Carlo simulation of the
// discrete model's own definition (Bar-Shalom et al. 2001, §6.3.2): the
// acceleration is constant over each interval, a ~ N(0, q), and the state
// moves by integrating ẍ = a. The integration here is classical Runge–Kutta
// over 5 sub-steps (exact for this polynomial motion up to rounding),
// independent of the Γ formula; the sample covariance of x_{k+1} − F x_k
// over 40000 seeded draws must match Q within five standard errors (the
// standard error of a sample covariance s_ij is √((Q_ii Q_jj + Q_ij²)/N)
// for Gaussian data: Anderson, "An Introduction to Multivariate Statistical
// Analysis", 3rd ed., 2003, Thm. 3.4.4 — theorem number from memory).
func TestDWNAMonteCarlo(t *testing.T) {
	const N = 40000
	rng := rand.New(rand.NewPCG(20261201, 7))
	dt, q := 1.5, 0.4
	F, Q := ConstantVelocity(2, dt, q)
	var sum [4][4]float64
	for range N {
		x0 := []float64{rng.NormFloat64() * 10, rng.NormFloat64(), rng.NormFloat64() * 10, rng.NormFloat64()}
		ax, ay := rng.NormFloat64()*math.Sqrt(q), rng.NormFloat64()*math.Sqrt(q)
		x1 := rk4Accel(x0, ax, ay, dt, 5)
		fx := apply(F, x0)
		var d [4]float64
		for i := range d {
			d[i] = x1[i] - fx[i]
		}
		for i := range 4 {
			for j := range 4 {
				sum[i][j] += d[i] * d[j]
			}
		}
	}
	for i := range 4 {
		for j := range 4 {
			got := sum[i][j] / N
			se := math.Sqrt((Q.At(i, i)*Q.At(j, j) + Q.At(i, j)*Q.At(i, j)) / N)
			if math.Abs(got-Q.At(i, j)) > 5*se+1e-12 {
				t.Errorf("Monte Carlo cov[%d][%d] = %.5f, Q = %.5f (5 s.e. = %.5f)", i, j, got, Q.At(i, j), 5*se)
			}
		}
	}
}

// TestDWNAIntegratedGain compares Q with q·ggᵀ where g is the response of
// [x, vx] to a unit constant acceleration over one interval, found by
// numerical (Runge–Kutta) integration of ẍ = 1 rather than by the closed
// form Γ = [T²/2, T]ᵀ (Bar-Shalom et al. 2001, §6.3.2, eq. 6.3.2-2).
func TestDWNAIntegratedGain(t *testing.T) {
	for _, dt := range []float64{0.25, 1, 3} {
		g := rk4Accel([]float64{0, 0, 0, 0}, 1, 0, dt, 10)
		q := 0.7
		_, Q := ConstantVelocity(1, dt, q)
		want := [][]float64{{q * g[0] * g[0], q * g[0] * g[1]}, {q * g[1] * g[0], q * g[1] * g[1]}}
		matNear(t, "Q", Q, want, 1e-12*(1+dt*dt*dt*dt))
	}
}

func rk4Accel(x []float64, ax, ay, T float64, n int) []float64 {
	f := func(s []float64) []float64 { return []float64{s[1], ax, s[3], ay} }
	x = append([]float64(nil), x...)
	h := T / float64(n)
	for range n {
		k1 := f(x)
		k2 := f(axpy(x, h/2, k1))
		k3 := f(axpy(x, h/2, k2))
		k4 := f(axpy(x, h, k3))
		for i := range x {
			x[i] += h / 6 * (k1[i] + 2*k2[i] + 2*k3[i] + k4[i])
		}
	}
	return x
}

// TestQSymmetricPSD checks every model's Q is symmetric with non-negative
// eigenvalues (gonum's symmetric eigensolver as the independent check), and
// that DWNA Q has rank equal to the number of axes (CHECK-VALUES §8.1: DWNA
// Q is singular).
func TestQSymmetricPSD(t *testing.T) {
	rwF, rwQ := RandomWalk(mot.Mat{Rows: 3, Cols: 3, Data: []float64{4, 1, 0, 1, 3, 0.5, 0, 0.5, 2}})
	matNear(t, "random-walk F", rwF, mot.Identity(3).RowsOf(), 0)
	_, rwd := RandomWalkDiag([]float64{0.1, 0, 2})
	type model struct {
		name string
		Q    mot.Mat
		rank int
	}
	models := []model{{"random walk", rwQ, 3}, {"random walk diag", rwd, 2}}
	for axes := 1; axes <= 3; axes++ {
		_, Q := ConstantVelocity(axes, 0.7, 0.2)
		models = append(models, model{"cv", Q, axes})
	}
	for _, w := range []float64{0, 0.05, -1.3} {
		_, Q := ConstantTurn(2, w, 1.1)
		models = append(models, model{"ct", Q, 2})
	}
	for _, m := range models {
		n := m.Q.Rows
		for i := range n {
			for j := range n {
				if m.Q.At(i, j) != m.Q.At(j, i) {
					t.Errorf("%s: Q not symmetric at (%d,%d)", m.name, i, j)
				}
			}
		}
		var eig mat.EigenSym
		if !eig.Factorize(mat.NewSymDense(n, m.Q.Clone().Data), false) {
			t.Fatalf("%s: eigen factorisation failed", m.name)
		}
		rank := 0
		for _, v := range eig.Values(nil) {
			if v < -1e-12 {
				t.Errorf("%s: Q has eigenvalue %g < 0", m.name, v)
			}
			if v > 1e-12 {
				rank++
			}
		}
		if rank != m.rank {
			t.Errorf("%s: Q has rank %d, want %d", m.name, rank, m.rank)
		}
	}
}

func TestRandomWalkCopiesNoise(t *testing.T) {
	noise := mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 0, 0, 1}}
	_, Q := RandomWalk(noise)
	noise.Data[0] = 99
	if Q.At(0, 0) != 1 {
		t.Errorf("RandomWalk retained its argument: Q[0][0] = %g after the caller changed it", Q.At(0, 0))
	}
}

func TestConstantVelocityPanicsOnBadAxes(t *testing.T) {
	for _, a := range []int{0, 4, -1} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("ConstantVelocity(%d, ...) did not panic", a)
				}
			}()
			ConstantVelocity(a, 1, 1)
		}()
	}
}

func apply(F mot.Mat, x []float64) []float64 {
	out := make([]float64, F.Rows)
	for i := range out {
		for j := range x {
			out[i] += F.At(i, j) * x[j]
		}
	}
	return out
}

func mul(a, b mot.Mat) mot.Mat {
	out := mot.NewMat(a.Rows, b.Cols)
	for i := range a.Rows {
		for j := range b.Cols {
			var s float64
			for k := range a.Cols {
				s += a.At(i, k) * b.At(k, j)
			}
			out.Set(i, j, s)
		}
	}
	return out
}

func BenchmarkConstantTurn(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		ConstantTurn(1, 0.05, 0.1)
	}
}

func BenchmarkConstantVelocity3(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		ConstantVelocity(3, 1, 0.1)
	}
}
