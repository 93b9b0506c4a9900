package kalman

import (
	"fmt"
	"math"

	"trackgate/harness/mot"
)

// ln2Pi is ln(2π).
var ln2Pi = math.Log(2 * math.Pi)

// NotPositiveDefiniteError reports a matrix that the Cholesky factorization
// rejected: the value under the square root at Pivot was Value (≤ 0 or NaN).
type NotPositiveDefiniteError struct {
	// What names the matrix, for example "innovation covariance S".
	What  string
	Pivot int
	Value float64
}

func (e *NotPositiveDefiniteError) Error() string {
	return fmt.Sprintf("kalman: %s is not positive definite: pivot %d is %g", e.What, e.Pivot, e.Value)
}

// Filter is a linear Kalman filter for one mot.Model with its own workspace.
// The zero value is not usable; call New.
type Filter struct {
	n, m       int
	f, q, h, r []float64

	// workspace
	xs          []float64 // n
	fp          []float64 // n×n: F P, then (I−KH) P
	pp          []float64 // n×n: result before copy-out
	hp          []float64 // m×n: H P
	k           []float64 // n×m: gain
	a           []float64 // n×n: I − K H
	kr          []float64 // n×m: K R
	nu, y, col  []float64 // m
	defaultProj Projection
}

// New returns a filter for model. It checks that the matrices have the
// dimensions StateDim and MeasDim declare.
func New(model mot.Model) (*Filter, error) {
	n, m := model.StateDim, model.MeasDim
	if n < 1 || m < 1 {
		return nil, fmt.Errorf("kalman: state dimension %d and measurement dimension %d must be ≥ 1", n, m)
	}
	check := func(name string, a mot.Mat, rows, cols int) error {
		if a.Rows != rows || a.Cols != cols || len(a.Data) != rows*cols {
			return fmt.Errorf("kalman: %s is %d×%d with %d entries, want %d×%d", name, a.Rows, a.Cols, len(a.Data), rows, cols)
		}
		for i, v := range a.Data {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return fmt.Errorf("kalman: %s entry (%d, %d) is %g, want a finite number", name, i/cols, i%cols, v)
			}
		}
		return nil
	}
	for _, c := range []struct {
		name       string
		a          mot.Mat
		rows, cols int
	}{{"F", model.F, n, n}, {"Q", model.Q, n, n}, {"H", model.H, m, n}, {"R", model.R, m, m}} {
		if err := check(c.name, c.a, c.rows, c.cols); err != nil {
			return nil, err
		}
	}
	f := &Filter{
		n: n, m: m,
		f:  append([]float64(nil), model.F.Data...),
		q:  append([]float64(nil), model.Q.Data...),
		h:  append([]float64(nil), model.H.Data...),
		r:  append([]float64(nil), model.R.Data...),
		xs: make([]float64, n),
		fp: make([]float64, n*n), pp: make([]float64, n*n), a: make([]float64, n*n),
		hp: make([]float64, n*m), k: make([]float64, n*m), kr: make([]float64, n*m),
		nu: make([]float64, m), y: make([]float64, m), col: make([]float64, m),
	}
	return f, nil
}

// Dims returns the state dimension n and the measurement dimension m.
func (f *Filter) Dims() (n, m int) { return f.n, f.m }

func (f *Filter) checkState(who string, x, p []float64) {
	if len(x) != f.n || len(p) != f.n*f.n {
		panic(fmt.Sprintf("kalman: %s: state of length %d and covariance of %d entries, want %d and %d", who, len(x), len(p), f.n, f.n*f.n))
	}
}

// PredictTo writes the prediction x⁻ = F x, P⁻ = F P Fᵀ + Q (symmetrised)
// into xDst and pDst. The destinations may alias x and p.
func (f *Filter) PredictTo(xDst, pDst, x, p []float64) {
	f.checkState("PredictTo", x, p)
	f.checkState("PredictTo destination", xDst, pDst)
	n := f.n
	mulVec(f.xs, f.f, x, n, n)
	mul(f.fp, f.f, p, n, n, n) // F P
	copy(xDst, f.xs)
	symOuterTo(pDst, f.fp, f.f, f.q, n, n) // F P Fᵀ + Q
}

// Projection is a predicted state carried into measurement space: the
// predicted measurement ẑ = H x⁻, the innovation covariance S = H P⁻ Hᵀ + R,
// its lower Cholesky factor L and ln|S|. The zero value is ready for
// ProjectTo, which sizes the buffers on first use.
type Projection struct {
	// M is the measurement dimension.
	M int
	// Zhat is ẑ (length M).
	Zhat []float64
	// S is the innovation covariance (M×M, row-major).
	S []float64
	// L is the lower Cholesky factor of S (M×M, row-major, zero above the
	// diagonal).
	L []float64
	// LogDetS is ln|S|.
	LogDetS float64
}

// ProjectTo fills dst with the projection of the predicted state (x, p). It
// returns a *NotPositiveDefiniteError when S is not positive definite.
func (f *Filter) ProjectTo(dst *Projection, x, p []float64) error {
	f.checkState("ProjectTo", x, p)
	n, m := f.n, f.m
	dst.M = m
	dst.Zhat = grow(dst.Zhat, m)
	dst.S = grow(dst.S, m*m)
	dst.L = grow(dst.L, m*m)
	mulVec(dst.Zhat, f.h, x, m, n)
	mul(f.hp, f.h, p, m, n, n)              // H P (m×n)
	symOuterTo(dst.S, f.hp, f.h, f.r, m, n) // H P Hᵀ + R
	ld, err := cholesky(dst.L, dst.S, m)
	if err != nil {
		return err
	}
	dst.LogDetS = ld
	return nil
}

// Distance2 returns the squared Mahalanobis distance d² = νᵀ S⁻¹ ν of z from
// the projection, ν = z − ẑ. For M ≤ 8 it allocates nothing.
func (pr *Projection) Distance2(z []float64) float64 {
	if len(z) != pr.M {
		panic(fmt.Sprintf("kalman: Distance2: measurement of length %d, want %d", len(z), pr.M))
	}
	var buf [8]float64
	var y []float64
	if pr.M <= len(buf) {
		y = buf[:pr.M]
	} else {
		y = make([]float64, pr.M)
	}
	for i := range y {
		y[i] = z[i] - pr.Zhat[i]
	}
	forward(y, pr.L, pr.M)
	return sumSquares(y)
}

// LogLikelihood returns ln N(z; ẑ, S) = −½ (d² + M ln 2π + ln|S|) for a
// detection at squared distance d2 (from Distance2).
func (pr *Projection) LogLikelihood(d2 float64) float64 {
	return float64(-0.5 * (d2 + float64(float64(pr.M)*ln2Pi) + pr.LogDetS))
}

// Result describes one measurement update.
type Result struct {
	// NIS is the normalised innovation squared νᵀ S⁻¹ ν.
	NIS float64
	// LogLik is ln N(z; ẑ, S).
	LogLik float64
}

// UpdateTo updates the predicted state (x, p) with the detection z, using
// pr, the projection of (x, p) from ProjectTo, and writes the posterior into
// xDst and pDst with the Joseph form, symmetrised. The destinations may
// alias x and p.
func (f *Filter) UpdateTo(xDst, pDst, x, p []float64, pr *Projection, z []float64) Result {
	f.checkState("UpdateTo", x, p)
	f.checkState("UpdateTo destination", xDst, pDst)
	n, m := f.n, f.m
	if len(z) != m || pr.M != m {
		panic(fmt.Sprintf("kalman: UpdateTo: measurement of length %d and projection of dimension %d, want %d", len(z), pr.M, m))
	}
	// ν and d².
	for i := 0; i < m; i++ {
		f.nu[i] = z[i] - pr.Zhat[i]
	}
	copy(f.y, f.nu)
	forward(f.y, pr.L, m)
	d2 := sumSquares(f.y)

	// K = P Hᵀ S⁻¹, row by row: S kᵢ = (P Hᵀ)ᵢ = (H P)ᵀᵢ since S and P
	// are symmetric.
	mul(f.hp, f.h, p, m, n, n)
	for i := 0; i < n; i++ {
		for a := 0; a < m; a++ {
			f.col[a] = f.hp[a*n+i]
		}
		forward(f.col, pr.L, m)
		backwardT(f.col, pr.L, m)
		copy(f.k[i*m:(i+1)*m], f.col)
	}
	// x = x⁻ + K ν.
	for i := 0; i < n; i++ {
		s := x[i]
		for j := 0; j < m; j++ {
			s += float64(f.k[i*m+j] * f.nu[j])
		}
		f.xs[i] = s
	}
	// A = I − K H.
	mul(f.a, f.k, f.h, n, m, n)
	for i := range f.a {
		f.a[i] = -f.a[i]
	}
	for i := 0; i < n; i++ {
		f.a[i*n+i] += 1
	}
	// P = A P Aᵀ + K R Kᵀ.
	// The upper triangle is computed and mirrored, so P is exactly
	// symmetric.
	mul(f.fp, f.a, p, n, n, n)
	mul(f.kr, f.k, f.r, n, m, m)
	for i := 0; i < n; i++ {
		api, kri := f.fp[i*n:(i+1)*n], f.kr[i*m:(i+1)*m]
		for j := i; j < n; j++ {
			aj, kj := f.a[j*n : (j+1)*n][:len(api)], f.k[j*m : (j+1)*m][:len(kri)]
			var s float64
			for l, v := range api {
				s += float64(v * aj[l])
			}
			var t float64
			for l, v := range kri {
				t += float64(v * kj[l])
			}
			f.pp[i*n+j] = s + t
			f.pp[j*n+i] = s + t
		}
	}
	copy(xDst, f.xs)
	copy(pDst, f.pp)
	return Result{NIS: d2, LogLik: pr.LogLikelihood(d2)}
}

// Update projects the predicted state (x, p), then updates it with z into
// xDst and pDst; it is ProjectTo followed by UpdateTo with the filter's own
// projection buffer.
func (f *Filter) Update(xDst, pDst, x, p, z []float64) (Result, error) {
	if err := f.ProjectTo(&f.defaultProj, x, p); err != nil {
		return Result{}, err
	}
	return f.UpdateTo(xDst, pDst, x, p, &f.defaultProj, z), nil
}

// Gain writes the gain K of the last UpdateTo (n×m, row-major) into dst.
func (f *Filter) Gain(dst []float64) { copy(dst, f.k) }

func grow(s []float64, n int) []float64 {
	if cap(s) < n {
		return make([]float64, n)
	}
	return s[:n]
}

// mulVec: dst (r) = A (r×c) x (c).
func mulVec(dst, a, x []float64, r, c int) {
	for i := 0; i < r; i++ {
		var s float64
		row := a[i*c : (i+1)*c]
		for j, v := range row {
			s += float64(v * x[j])
		}
		dst[i] = s
	}
}

// mul: dst (r×c) = A (r×k) B (k×c). dst must not alias A or B. Each entry
// is summed over l in increasing order from zero; terms whose A factor is
// zero are skipped (model matrices such as F and H are mostly zeros).
func mul(dst, a, b []float64, r, k, c int) {
	for i := 0; i < r; i++ {
		ai, di := a[i*k:(i+1)*k], dst[i*c:(i+1)*c]
		clear(di)
		for l, v := range ai {
			if v == 0 {
				continue
			}
			bl := b[l*c : (l+1)*c][:len(di)]
			for j, w := range bl {
				di[j] += float64(v * w)
			}
		}
	}
}

// symOuterTo writes A Bᵀ + C into dst (r×r) for a product known to be
// symmetric, A and B r×k, C r×r: it computes the upper triangle (with the
// upper triangle of C) and mirrors it, so dst is exactly symmetric. dst must
// not alias A or B.
func symOuterTo(dst, a, b, c []float64, r, k int) {
	for i := 0; i < r; i++ {
		ai := a[i*k : (i+1)*k]
		for j := i; j < r; j++ {
			bj := b[j*k : (j+1)*k][:len(ai)]
			var s float64
			for l, v := range ai {
				s += float64(v * bj[l])
			}
			s += c[i*r+j]
			dst[i*r+j] = s
			dst[j*r+i] = s
		}
	}
}

// cholesky writes the lower factor L of the symmetric matrix s (n×n) into l
// and returns ln|s|. It reads only the lower triangle of s.
func cholesky(l, s []float64, n int) (float64, error) {
	var logDet float64
	for j := 0; j < n; j++ {
		d := s[j*n+j]
		for k := 0; k < j; k++ {
			d -= float64(l[j*n+k] * l[j*n+k])
		}
		if !(d > 0) || math.IsInf(d, 0) {
			return 0, &NotPositiveDefiniteError{What: "innovation covariance S", Pivot: j, Value: d}
		}
		ljj := math.Sqrt(d)
		l[j*n+j] = ljj
		logDet += math.Log(ljj)
		for i := j + 1; i < n; i++ {
			v := s[i*n+j]
			for k := 0; k < j; k++ {
				v -= float64(l[i*n+k] * l[j*n+k])
			}
			l[i*n+j] = v / ljj
		}
		for i := 0; i < j; i++ {
			l[i*n+j] = 0
		}
	}
	return 2 * logDet, nil
}

// forward solves L y = b in place (b becomes y).
func forward(b, l []float64, n int) {
	for i := 0; i < n; i++ {
		v := b[i]
		for k := 0; k < i; k++ {
			v -= float64(l[i*n+k] * b[k])
		}
		b[i] = v / l[i*n+i]
	}
}

// backwardT solves Lᵀ x = b in place.
func backwardT(b, l []float64, n int) {
	for i := n - 1; i >= 0; i-- {
		v := b[i]
		for k := i + 1; k < n; k++ {
			v -= float64(l[k*n+i] * b[k])
		}
		b[i] = v / l[i*n+i]
	}
}

func sumSquares(y []float64) float64 {
	var s float64
	for _, v := range y {
		s += float64(v * v)
	}
	return s
}
