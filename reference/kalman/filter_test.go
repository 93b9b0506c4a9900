package kalman

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"trackgate/harness/mot"
)

// close reports whether got is within abs + rel·|want| of want.
func near(got, want, abs, rel float64) bool {
	return math.Abs(got-want) <= abs+rel*math.Abs(want)
}

func scalarModel(f, q, h, r float64) mot.Model {
	return mot.Model{
		StateDim: 1, MeasDim: 1, Interval: 1,
		F: mot.Mat{Rows: 1, Cols: 1, Data: []float64{f}},
		Q: mot.Mat{Rows: 1, Cols: 1, Data: []float64{q}},
		H: mot.Mat{Rows: 1, Cols: 1, Data: []float64{h}},
		R: mot.Mat{Rows: 1, Cols: 1, Data: []float64{r}},
	}
}

// cvModel is the 1-D constant-velocity model with discrete white-noise
// acceleration: F = [[1,T],[0,1]], Q = σv²·Γ·Γᵀ with Γ = [T²/2, T]ᵀ,
// H = [1, 0], R = σw². Source: Bar-Shalom, Li, Kirubarajan, "Estimation
// with Applications to Tracking and Navigation", 2001, §6.3.2 (DWNA model;
// section number from memory).
func cvModel(T, sv2, sw2 float64) mot.Model {
	g0, g1 := T*T/2, T
	return mot.Model{
		StateDim: 2, MeasDim: 1, Interval: T,
		F: mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, T, 0, 1}},
		Q: mot.Mat{Rows: 2, Cols: 2, Data: []float64{sv2 * g0 * g0, sv2 * g0 * g1, sv2 * g0 * g1, sv2 * g1 * g1}},
		H: mot.Mat{Rows: 1, Cols: 2, Data: []float64{1, 0}},
		R: mot.Mat{Rows: 1, Cols: 1, Data: []float64{sw2}},
	}
}

// step runs one predict and update in place and returns the prior variance
// matrix, the gain and the update result.
func step(t *testing.T, f *Filter, x, p, z []float64) (prior, gain []float64, res Result) {
	t.Helper()
	f.PredictTo(x, p, x, p)
	prior = append([]float64(nil), p...)
	res, err := f.Update(x, p, x, p, z)
	if err != nil {
		t.Fatalf("Update: %v", err)
	}
	n, m := f.Dims()
	gain = make([]float64, n*m)
	f.Gain(gain)
	return prior, gain, res
}

// TestRandomConstant reproduces the variance and gain sequence of the random
// constant example: G. Welch, G. Bishop, "An Introduction to the Kalman
// Filter", TR 95-041, UNC Chapel Hill, §3 "Estimating a random constant"
// (A = 1, H = 1, Q = 1e-5, R = 0.1², x̂₀ = 0, P₀ = 1; the setup is from
// memory, as CHECK-VALUES §7.1 flags it). The measurements of
// the report are not published; the variance and gain do not depend on
// them. Expected values: CHECK-VALUES §7.1 (numpy 1.24.2), steady state from
// the closed-form Riccati fixed point (§7.3).
func TestRandomConstant(t *testing.T) {
	rows := map[int][3]float64{ // k: P⁻_k, K_k, P_k
		1:  {1.000010000000, 0.990099107930, 9.900991079296e-3},
		2:  {9.910991079296e-3, 0.497764829477, 4.977648294766e-3},
		3:  {4.987648294766e-3, 0.332783916240, 3.327839162404e-3},
		10: {1.144937234720e-3, 0.102731600063, 1.027316000626e-3},
		50: {3.511212297374e-4, 0.033921081779, 3.392108177892e-4},
	}
	f, err := New(scalarModel(1, 1e-5, 1, 0.01))
	if err != nil {
		t.Fatal(err)
	}
	x, p := []float64{0}, []float64{1}
	for k := 1; k <= 2000; k++ {
		prior, gain, _ := step(t, f, x, p, []float64{-0.37727})
		if want, ok := rows[k]; ok {
			got := [3]float64{prior[0], gain[0], p[0]}
			for i := range got {
				if !near(got[i], want[i], 1e-15, 1e-9) {
					t.Errorf("k=%d: (P⁻, K, P)[%d] = %.12g, want %.12g", k, i, got[i], want[i])
				}
			}
		}
	}
	// Steady state, CHECK-VALUES §7.1 row ∞.
	if !near(p[0], 3.112672920174e-4, 0, 1e-9) {
		t.Errorf("steady P = %.12g, want 3.112672920174e-4", p[0])
	}
	// The other measurement variances of the report (CHECK-VALUES §7.1).
	for _, c := range []struct{ r, p50 float64 }{{1, 1.977258190697e-2}, {1e-4, 2.701562118717e-5}} {
		f, _ := New(scalarModel(1, 1e-5, 1, c.r))
		x, p := []float64{0}, []float64{1}
		for k := 1; k <= 50; k++ {
			step(t, f, x, p, []float64{-0.37727})
		}
		if !near(p[0], c.p50, 0, 1e-9) {
			t.Errorf("R=%g: P_50 = %.12g, want %.12g", c.r, p[0], c.p50)
		}
	}
}

// TestBuildingHeight reproduces A. Becker, kalmanfilter.net, "Kalman Filter
// in one dimension", Example 5 (estimating the height of a building; also in
// "Kalman Filter from the Ground Up"): static model, x₀ = 60, p₀ = 225,
// r = 25 and the ten published altimeter readings. The site prints the final
// estimate 49.57 m with variance 2.47 (from memory; CHECK-VALUES §7.2 flags
// it [SRC-mem]); the per-step table is CHECK-VALUES §7.2 (numpy 1.24.2), and
// the final values are also checked against the independent closed form of
// the information-weighted average x₁₀ = (60/225 + Σz/25)/(1/225 + 10/25).
func TestBuildingHeight(t *testing.T) {
	z := []float64{48.54, 47.11, 55.01, 55.15, 49.89, 40.85, 46.72, 50.05, 51.27, 49.95}
	table := [][3]float64{ // K, x̂, p
		{0.9, 49.686, 22.5},
		{0.4736842105, 48.4657894737, 11.8421052632},
		{0.3214285714, 50.5692857143, 8.0357142857},
		{0.2432432432, 51.6835135135, 6.0810810811},
		{0.1956521739, 51.3326086957, 4.8913043478},
		{0.1636363636, 49.6172727273, 4.0909090909},
		{0.140625, 49.20984375, 3.515625},
		{0.1232876712, 49.3134246575, 3.0821917808},
		{0.1097560976, 49.5281707317, 2.7439024390},
		{0.0989010989, 49.5698901099, 2.4725274725},
	}
	f, err := New(scalarModel(1, 0, 1, 25))
	if err != nil {
		t.Fatal(err)
	}
	x, p := []float64{60}, []float64{225}
	for i, zi := range z {
		_, gain, _ := step(t, f, x, p, []float64{zi})
		got := [3]float64{gain[0], x[0], p[0]}
		for j := range got {
			if !near(got[j], table[i][j], 1e-10, 0) {
				t.Errorf("n=%d: (K, x̂, p)[%d] = %.12g, want %.10f", i+1, j, got[j], table[i][j])
			}
		}
	}
	if got := math.Round(x[0]*100) / 100; got != 49.57 {
		t.Errorf("final estimate rounds to %v, want the printed 49.57", got)
	}
	if got := math.Round(p[0]*100) / 100; got != 2.47 {
		t.Errorf("final variance rounds to %v, want the printed 2.47", got)
	}
	var sum float64
	for _, v := range z {
		sum += v
	}
	wantX := (60.0/225 + sum/25) / (1.0/225 + 10.0/25)
	if !near(x[0], wantX, 1e-12, 0) || !near(p[0], 225.0/91, 1e-12, 0) {
		t.Errorf("final (x̂, p) = (%.15g, %.15g), want the information-weighted (%.15g, %.15g)", x[0], p[0], wantX, 225.0/91)
	}
}

// TestRandomWalkSteadyState checks the scalar random walk against the
// closed-form fixed point of the Riccati recursion, M² − qM − qr = 0:
// M = (q + √(q² + 4qr))/2, P = M − q, K = M/(M + r) (CHECK-VALUES §7.3, from
// memory there; the fixed point also satisfies Kalata's tracking-index
// relation K²/(1 − K) = q/r: P. R. Kalata, "The tracking index: a
// generalized parameter for α–β and α–β–γ target trackers", IEEE TAES
// 20(2):174–182, 1984). The first five posteriors from P₀ = 1 are the
// CHECK-VALUES §7.3 values (numpy 1.24.2).
func TestRandomWalkSteadyState(t *testing.T) {
	tests := []struct {
		name       string
		q, r       float64
		firstFive  []float64
		wantPrior  float64 // printed in CHECK-VALUES §7.3
		wantGainTo float64
	}{
		{"q0.5-r0.3", 0.5, 0.3, []float64{0.25, 0.214285714286, 0.211267605634, 0.211002785515, 0.210979473757}, 0.710977222864644, 0.703257409548815},
		{"golden-ratio", 1, 1, nil, 1.618033988749895, 0.618033988749895},
		{"slow", 1e-5, 0.01, nil, 3.21267292017e-4, 3.1126729202e-2},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			f, _ := New(scalarModel(1, tc.q, 1, tc.r))
			x, p := []float64{0}, []float64{1}
			var prior, gain []float64
			for k := 0; k < 5000; k++ {
				prior, gain, _ = step(t, f, x, p, []float64{0})
				if k < len(tc.firstFive) && !near(p[0], tc.firstFive[k], 1e-12, 0) {
					t.Errorf("P_%d = %.12g, want %.12g", k+1, p[0], tc.firstFive[k])
				}
			}
			m := (tc.q + math.Sqrt(tc.q*tc.q+4*tc.q*tc.r)) / 2
			if !near(prior[0], m, 0, 1e-12) || !near(p[0], m-tc.q, 0, 1e-9) || !near(gain[0], m/(m+tc.r), 0, 1e-12) {
				t.Errorf("steady (M, P, K) = (%.15g, %.15g, %.15g), want (%.15g, %.15g, %.15g)", prior[0], p[0], gain[0], m, m-tc.q, m/(m+tc.r))
			}
			if !near(prior[0], tc.wantPrior, 0, 1e-10) || !near(gain[0], tc.wantGainTo, 0, 1e-9) {
				t.Errorf("steady (M, K) = (%.15g, %.15g), want printed (%.15g, %.15g)", prior[0], gain[0], tc.wantPrior, tc.wantGainTo)
			}
			if k := gain[0]; !near(k*k/(1-k), tc.q/tc.r, 0, 1e-9) {
				t.Errorf("K²/(1−K) = %.15g, want q/r = %.15g", k*k/(1-k), tc.q/tc.r)
			}
		})
	}
}

// TestAlphaBetaSteadyState runs the DWNA constant-velocity filter to its
// steady state and compares the gain with the α–β closed form in the
// tracking index λ = σv·T²/σw: α = −(λ² + 8λ − (λ + 4)√(λ² + 8λ))/8,
// β = (λ² + 4λ − λ√(λ² + 8λ))/4, K = [α, β/T] (Kalata 1984, above; also
// Bar-Shalom, Li, Kirubarajan 2001, §6.5.3; formulas and section from
// memory, as CHECK-VALUES §7.4 flags them, and confirmed here by the
// independently computed steady covariances). The steady covariances are
// CHECK-VALUES §7.4 (scipy 1.10.1 solve_discrete_are); λ = 1 is the exact
// rational fixed point checked by hand there.
func TestAlphaBetaSteadyState(t *testing.T) {
	tests := []struct {
		T, sv, sw   float64
		prior, post [4]float64
	}{
		{1, 1, 1, [4]float64{3, 2, 2, 2}, [4]float64{0.75, 0.5, 0.5, 1}},
		{1, 2, 1, [4]float64{5.854101966250, 5.236067977500, 5.236067977500, 6.472135955000}, [4]float64{0.854101966250, 0.763932022500, 0.763932022500, 2.472135955000}},
		{0.5, 1, 0.25, [4]float64{0.1875, 0.25, 0.25, 0.5}, [4]float64{0.046875, 0.0625, 0.0625, 0.25}},
		{2, 0.5, 3, [4]float64{19.119429464124, 5.302775637732, 5.302775637732, 2.302775637732}, [4]float64{6.119429464124, 1.697224362268, 1.697224362268, 1.302775637732}},
	}
	for _, tc := range tests {
		f, _ := New(cvModel(tc.T, tc.sv*tc.sv, tc.sw*tc.sw))
		x, p := []float64{0, 0}, []float64{100, 0, 0, 100}
		var prior, gain []float64
		for k := 0; k < 3000; k++ {
			prior, gain, _ = step(t, f, x, p, []float64{0})
		}
		l := tc.sv * tc.T * tc.T / tc.sw
		rt := math.Sqrt(l*l + 8*l)
		alpha := -(l*l + 8*l - (l+4)*rt) / 8
		beta := (l*l + 4*l - l*rt) / 4
		if !near(gain[0], alpha, 1e-12, 1e-9) || !near(gain[1], beta/tc.T, 1e-12, 1e-9) {
			t.Errorf("T=%g σv=%g σw=%g: K = %v, want [α, β/T] = [%.12g, %.12g]", tc.T, tc.sv, tc.sw, gain, alpha, beta/tc.T)
		}
		for i := range 4 {
			if !near(prior[i], tc.prior[i], 1e-11, 1e-10) || !near(p[i], tc.post[i], 1e-11, 1e-10) {
				t.Errorf("T=%g σv=%g σw=%g: steady (M, P)[%d] = (%.12g, %.12g), want (%.12g, %.12g)", tc.T, tc.sv, tc.sw, i, prior[i], p[i], tc.prior[i], tc.post[i])
			}
		}
	}
	// One step maps the λ = 1 fixed point to itself exactly (hand check in
	// CHECK-VALUES §7.4): every intermediate is a dyadic rational.
	f, _ := New(cvModel(1, 1, 1))
	x, p := []float64{0, 0}, []float64{0.75, 0.5, 0.5, 1}
	step(t, f, x, p, []float64{0})
	if want := []float64{0.75, 0.5, 0.5, 1}; p[0] != want[0] || p[1] != want[1] || p[2] != want[2] || p[3] != want[3] {
		t.Errorf("fixed point moved: P = %v, want %v exactly", p, want)
	}
}

// TestDeterministicRun follows the three-step constant-velocity run of
// CHECK-VALUES §7.5 (inputs constructed there, values from numpy 1.24.2):
// T = 1, σv² = 1, R = 1, x₀ = [0, 1], P₀ = diag(10, 10), z = 1.2, 1.9, 3.1.
func TestDeterministicRun(t *testing.T) {
	want := []struct {
		nu, s, nis float64 // nis < 0: not printed
		k, x, p    []float64
	}{
		{0.2, 21.25, 0.001882352941, []float64{0.952941176471, 0.494117647059}, []float64{1.190588235294, 1.098823529412}, []float64{0.952941176471, 0.494117647059, 0.494117647059, 5.811764705882}},
		{-0.389411764706, 9.002941176471, -1, []float64{0.888925187847, 0.755962103888}, []float64{1.943253838615, 0.804442992486}, []float64{0.888925187847, 0.755962103888, 0.755962103888, 1.666775563541}},
		{0.352303168899, 5.317624959164, -1, []float64{0.811946121120, 0.549632155309}, []float64{3.033748022547, 0.998080142530}, []float64{0.811946121120, 0.549632155309, 0.549632155309, 1.060344959990}},
	}
	f, _ := New(cvModel(1, 1, 1))
	x, p := []float64{0, 1}, []float64{10, 0, 0, 10}
	for i, z := range []float64{1.2, 1.9, 3.1} {
		f.PredictTo(x, p, x, p)
		if i == 0 && (x[0] != 1 || x[1] != 1 || !near(p[0], 20.25, 1e-12, 0) || !near(p[1], 10.5, 1e-12, 0) || !near(p[3], 11, 1e-12, 0)) {
			t.Errorf("k=1: predicted x⁻ = %v, P⁻ = %v, want [1 1] and [[20.25 10.5] [10.5 11]]", x, p)
		}
		var pr Projection
		if err := f.ProjectTo(&pr, x, p); err != nil {
			t.Fatal(err)
		}
		w := want[i]
		if nu := z - pr.Zhat[0]; !near(nu, w.nu, 1e-11, 0) || !near(pr.S[0], w.s, 1e-11, 0) {
			t.Errorf("k=%d: (ν, S) = (%.12g, %.12g), want (%.12g, %.12g)", i+1, nu, pr.S[0], w.nu, w.s)
		}
		res := f.UpdateTo(x, p, x, p, &pr, []float64{z})
		if w.nis >= 0 && !near(res.NIS, w.nis, 1e-12, 0) {
			t.Errorf("k=%d: NIS = %.12g, want %.12g", i+1, res.NIS, w.nis)
		}
		if nis := w.nu * w.nu / w.s; !near(res.NIS, nis, 1e-11, 0) {
			t.Errorf("k=%d: NIS = %.12g, want ν²/S = %.12g", i+1, res.NIS, nis)
		}
		gain := make([]float64, 2)
		f.Gain(gain)
		for j := range 2 {
			if !near(gain[j], w.k[j], 1e-11, 0) || !near(x[j], w.x[j], 1e-11, 0) {
				t.Errorf("k=%d: (K, x)[%d] = (%.12g, %.12g), want (%.12g, %.12g)", i+1, j, gain[j], x[j], w.k[j], w.x[j])
			}
		}
		for j := range 4 {
			if !near(p[j], w.p[j], 1e-11, 0) {
				t.Errorf("k=%d: P[%d] = %.12g, want %.12g", i+1, j, p[j], w.p[j])
			}
		}
	}
}

// randSPD returns a random symmetric positive definite n×n matrix A Aᵀ + c·I.
func randSPD(rng *rand.Rand, n int, c float64) []float64 {
	a := make([]float64, n*n)
	for i := range a {
		a[i] = rng.NormFloat64()
	}
	out := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			var s float64
			for k := 0; k < n; k++ {
				s += float64(a[i*n+k] * a[j*n+k]) // no fusion: same inputs on every build
			}
			out[i*n+j] = s
		}
		out[i*n+i] += c
	}
	return out
}

func randModel(rng *rand.Rand, n, m int) mot.Model {
	md := mot.Model{StateDim: n, MeasDim: m, Interval: 1,
		F: mot.NewMat(n, n), Q: mot.Mat{Rows: n, Cols: n, Data: randSPD(rng, n, 0.5)},
		H: mot.NewMat(m, n), R: mot.Mat{Rows: m, Cols: m, Data: randSPD(rng, m, 1)}}
	for i := range md.F.Data {
		md.F.Data[i] = float64(rng.NormFloat64() * 0.3)
	}
	for i := 0; i < n; i++ {
		md.F.Data[i*n+i] += 1
	}
	for i := range md.H.Data {
		md.H.Data[i] = rng.NormFloat64()
	}
	return md
}

// TestAgainstGonum cross-checks predict and update with gonum v0.17.0 mat
// (Dense products, Cholesky solve and log-determinant), an independent
// linear-algebra library, using the standard-form covariance update
// P = (I − K H) P⁻, which equals the Joseph form in exact arithmetic on
// well-conditioned problems (Bar-Shalom, Li, Kirubarajan 2001, §5.2.3).
func TestAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(20261201, 4))
	for trial := 0; trial < 300; trial++ {
		n := 1 + rng.IntN(6)
		m := 1 + rng.IntN(n)
		md := randModel(rng, n, m)
		f, err := New(md)
		if err != nil {
			t.Fatal(err)
		}
		x := make([]float64, n)
		for i := range x {
			x[i] = rng.NormFloat64() * 10
		}
		p := randSPD(rng, n, 1)
		z := make([]float64, m)
		for i := range z {
			z[i] = rng.NormFloat64() * 3
		}

		F, Q := mat.NewDense(n, n, md.F.Data), mat.NewDense(n, n, md.Q.Data)
		H, R := mat.NewDense(m, n, md.H.Data), mat.NewDense(m, m, md.R.Data)
		var xp mat.VecDense
		xp.MulVec(F, mat.NewVecDense(n, x))
		var fp, pp mat.Dense
		fp.Mul(F, mat.NewDense(n, n, p))
		pp.Mul(&fp, F.T())
		pp.Add(&pp, Q)
		var hp, s mat.Dense
		hp.Mul(H, &pp)
		s.Mul(&hp, H.T())
		s.Add(&s, R)
		sym := mat.NewSymDense(m, nil)
		for i := 0; i < m; i++ {
			for j := 0; j < m; j++ {
				sym.SetSym(i, j, (s.At(i, j)+s.At(j, i))/2)
			}
		}
		var chol mat.Cholesky
		if !chol.Factorize(sym) {
			t.Fatal("gonum: S not positive definite")
		}
		var zhat, nu, sinvNu mat.VecDense
		zhat.MulVec(H, &xp)
		nu.SubVec(mat.NewVecDense(m, z), &zhat)
		if err := chol.SolveVecTo(&sinvNu, &nu); err != nil {
			t.Fatal(err)
		}
		wantNIS := mat.Dot(&nu, &sinvNu)
		var pht, kt, k mat.Dense
		pht.Mul(&pp, H.T())
		if err := chol.SolveTo(&kt, pht.T()); err != nil {
			t.Fatal(err)
		}
		k.CloneFrom(kt.T())
		var xu mat.VecDense
		xu.MulVec(&k, &nu)
		xu.AddVec(&xu, &xp)
		var ikh, pu mat.Dense
		ikh.Mul(&k, H)
		ikh.Sub(eye(n), &ikh)
		pu.Mul(&ikh, &pp)
		wantLL := -0.5 * (wantNIS + float64(m)*math.Log(2*math.Pi) + chol.LogDet())

		xs, ps := append([]float64(nil), x...), append([]float64(nil), p...)
		f.PredictTo(xs, ps, xs, ps)
		for i := 0; i < n; i++ {
			if !near(xs[i], xp.AtVec(i), 1e-9, 1e-10) {
				t.Fatalf("trial %d: x⁻[%d] = %g, gonum %g", trial, i, xs[i], xp.AtVec(i))
			}
			for j := 0; j < n; j++ {
				if !near(ps[i*n+j], pp.At(i, j), 1e-9, 1e-10) {
					t.Fatalf("trial %d: P⁻(%d,%d) = %g, gonum %g", trial, i, j, ps[i*n+j], pp.At(i, j))
				}
			}
		}
		res, err := f.Update(xs, ps, xs, ps, z)
		if err != nil {
			t.Fatal(err)
		}
		if !near(res.NIS, wantNIS, 1e-9, 1e-8) || !near(res.LogLik, wantLL, 1e-9, 1e-8) {
			t.Fatalf("trial %d: (NIS, loglik) = (%g, %g), gonum (%g, %g)", trial, res.NIS, res.LogLik, wantNIS, wantLL)
		}
		scale := 1 + mat.Norm(&pp, math.Inf(1))
		for i := 0; i < n; i++ {
			if !near(xs[i], xu.AtVec(i), 1e-8*scale, 1e-8) {
				t.Fatalf("trial %d: x[%d] = %g, gonum %g", trial, i, xs[i], xu.AtVec(i))
			}
			for j := 0; j < n; j++ {
				if !near(ps[i*n+j], pu.At(i, j), 1e-8*scale, 1e-8) {
					t.Fatalf("trial %d: P(%d,%d) Joseph %g, gonum standard form %g", trial, i, j, ps[i*n+j], pu.At(i, j))
				}
				if ps[i*n+j] != ps[j*n+i] {
					t.Fatalf("trial %d: P not symmetric at (%d,%d)", trial, i, j)
				}
			}
		}
	}
}

func eye(n int) *mat.Dense {
	d := mat.NewDense(n, n, nil)
	for i := 0; i < n; i++ {
		d.Set(i, i, 1)
	}
	return d
}

// TestJosephKeepsSymmetricPSD applies a deliberately poor gain situation
// (very precise measurement of a large, nearly singular prior) and checks
// the Joseph-form posterior stays symmetric with a non-negative diagonal,
// the property the Joseph form exists for (common practice).
func TestJosephKeepsSymmetricPSD(t *testing.T) {
	f, _ := New(cvModel(1, 1e-6, 1e-10))
	x, p := []float64{0, 0}, []float64{1e8, 1e8 - 1, 1e8 - 1, 1e8}
	for k := 0; k < 50; k++ {
		step(t, f, x, p, []float64{float64(k)})
		if p[1] != p[2] || p[0] < 0 || p[3] < 0 || p[0]*p[3]-p[1]*p[2] < -1e-12*p[0]*p[3] {
			t.Fatalf("k=%d: P = %v is not symmetric positive semi-definite", k, p)
		}
	}
}

func TestNotPositiveDefinite(t *testing.T) {
	md := scalarModel(1, 0, 1, 1)
	md.StateDim, md.MeasDim = 1, 2
	md.H = mot.Mat{Rows: 2, Cols: 1, Data: []float64{1, 1}}
	md.R = mot.Mat{Rows: 2, Cols: 2, Data: []float64{1, 0, 0, -2}}
	f, err := New(md)
	if err != nil {
		t.Fatal(err)
	}
	x, p := []float64{0}, []float64{0}
	_, err = f.Update(x, p, x, p, []float64{0, 0})
	var npd *NotPositiveDefiniteError
	if !errors.As(err, &npd) || npd.Pivot != 1 || npd.Value != -2 {
		t.Fatalf("Update with S = diag(1, −2) returned %v, want a NotPositiveDefiniteError at pivot 1 with value −2", err)
	}
	p[0] = math.NaN()
	if _, err := f.Update(x, p, x, p, []float64{0, 0}); !errors.As(err, &npd) {
		t.Fatalf("Update with NaN covariance returned %v, want a NotPositiveDefiniteError", err)
	}
}

func TestNewRejectsBadModel(t *testing.T) {
	tests := []struct {
		name   string
		change func(*mot.Model)
	}{
		{"zero-state", func(m *mot.Model) { m.StateDim = 0 }},
		{"F-shape", func(m *mot.Model) { m.F = mot.NewMat(3, 3) }},
		{"H-shape", func(m *mot.Model) { m.H = mot.NewMat(1, 3) }},
		{"R-nan", func(m *mot.Model) { m.R.Data = []float64{math.NaN()} }},
		{"Q-ragged", func(m *mot.Model) { m.Q.Data = nil }},
	}
	for _, tc := range tests {
		md := cvModel(1, 1, 1)
		tc.change(&md)
		if _, err := New(md); err == nil {
			t.Errorf("%s: New accepted a bad model", tc.name)
		}
	}
}

// TestNoAllocs proves a predict, project and update step allocates nothing
// for state dimensions up to 6.
func TestNoAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for _, n := range []int{1, 2, 4, 6} {
		m := (n + 1) / 2
		f, _ := New(randModel(rng, n, m))
		x, p := make([]float64, n), randSPD(rng, n, 1)
		z := make([]float64, m)
		var pr Projection
		_ = f.ProjectTo(&pr, x, p)
		allocs := testing.AllocsPerRun(100, func() {
			f.PredictTo(x, p, x, p)
			if err := f.ProjectTo(&pr, x, p); err != nil {
				panic(err)
			}
			_ = pr.Distance2(z)
			f.UpdateTo(x, p, x, p, &pr, z)
		})
		if allocs != 0 {
			t.Errorf("n=%d: %v allocations per step, want 0", n, allocs)
		}
	}
}
