package sim

import (
	"fmt"
	"math"
	"math/rand/v2"

	"trackgate/harness/mot"
)

// pivotTol is the relative size below which an LDLᵀ pivot is taken as an
// exact zero: d_j ≤ pivotTol·A_jj means that component j is (up to
// rounding) a linear function of the components before it.
const pivotTol = 1e-10

// factor returns a lower-triangular n×n matrix G, row-major, with
// G Gᵀ = A for a symmetric positive semi-definite A, so that G u with
// u ~ N(0, I) is distributed N(0, A).
//
// It computes A = L D Lᵀ with unit lower-triangular L and diagonal D ≥ 0
// (Golub, Van Loan, Matrix Computations, 4th ed., 2013, §4.1, from memory):
//
//	d_j  = A_jj − Σ_{k<j} L_jk² d_k
//	L_ij = (A_ij − Σ_{k<j} L_ik L_jk d_k) / d_j,   i > j
//
// and returns G = L·D^½. Unlike a Cholesky factorisation it accepts a
// singular A: a pivot d_j ≤ pivotTol·A_jj is set to zero together with the
// column of L below it. It reports an error, naming what (e.g. "Q"), when A
// is not square, not symmetric, has a non-finite entry, or is not positive
// semi-definite (a clearly negative pivot, or G Gᵀ that does not give A back).
func factor(what string, a mot.Mat) ([]float64, error) {
	n := a.Rows
	if a.Cols != n || len(a.Data) != n*n {
		return nil, fmt.Errorf("%s: expected a square matrix, got %d×%d", what, a.Rows, a.Cols)
	}
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			v := a.At(i, j)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%s[%d][%d]: expected a finite number, got %v", what, i, j, v)
			}
			if j < i {
				w := a.At(j, i)
				if math.Abs(v-w) > 1e-12*math.Max(math.Abs(v), math.Abs(w)) {
					return nil, fmt.Errorf("%s: expected a symmetric matrix, but [%d][%d] = %v and [%d][%d] = %v", what, i, j, v, j, i, w)
				}
			}
		}
		if a.At(i, i) < 0 {
			return nil, fmt.Errorf("%s[%d][%d]: expected a non-negative variance, got %v", what, i, i, a.At(i, i))
		}
	}
	l := make([]float64, n*n)
	d := make([]float64, n)
	for j := 0; j < n; j++ {
		s := a.At(j, j)
		for k := 0; k < j; k++ {
			s -= float64(float64(l[j*n+k]*l[j*n+k]) * d[k])
		}
		if s <= pivotTol*a.At(j, j) {
			if s < -pivotTol*a.At(j, j)-1e-300 {
				return nil, fmt.Errorf("%s: expected a positive semi-definite matrix (pivot %d is %v)", what, j, s)
			}
			s = 0
		}
		d[j] = s
		l[j*n+j] = 1
		if s == 0 {
			continue
		}
		for i := j + 1; i < n; i++ {
			t := a.At(i, j)
			for k := 0; k < j; k++ {
				t -= float64(float64(l[i*n+k]*l[j*n+k]) * d[k])
			}
			l[i*n+j] = t / s
		}
	}
	g := make([]float64, n*n)
	for j := 0; j < n; j++ {
		r := math.Sqrt(d[j])
		for i := j; i < n; i++ {
			g[i*n+j] = float64(l[i*n+j] * r)
		}
	}
	// Check G Gᵀ = A entry by entry, relative to the diagonal scale.
	for i := 0; i < n; i++ {
		for j := 0; j <= i; j++ {
			var s float64
			for k := 0; k <= j; k++ {
				s += float64(g[i*n+k] * g[j*n+k])
			}
			scale := math.Sqrt(a.At(i, i) * a.At(j, j))
			if math.Abs(s-a.At(i, j)) > 1e-8*scale {
				return nil, fmt.Errorf("%s: expected a positive semi-definite matrix ([%d][%d] cannot be reproduced by a factor)", what, i, j)
			}
		}
	}
	return g, nil
}

// gaussTo sets dst to G u with u a vector of len(dst) standard normal draws
// from r (NormFloat64), G lower-triangular n×n row-major; u is scratch space
// of at least len(dst). Exactly n draws are taken whatever G holds, so the
// stream position never depends on the matrix.
func gaussTo(dst, g, u []float64, r *rand.Rand) {
	n := len(dst)
	for i := range u[:n] {
		u[i] = r.NormFloat64()
	}
	for i := 0; i < n; i++ {
		var s float64
		for k := 0; k <= i; k++ {
			s += float64(g[i*n+k] * u[k])
		}
		dst[i] = s
	}
}
