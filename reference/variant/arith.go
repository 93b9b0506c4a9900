package variant

import (
	"fmt"
	"math"

	"trackgate/harness/mot"
	"trackgate/reference/kalman"
	"trackgate/reference/tracker"
)

// sums computes s + Σₗ a[ia + l·sa]·b[ib + l·sb] (add) and s − Σₗ … (sub)
// over l < n, one term at a time. The order of the terms and the rounding of
// each product are what the resum and fused variants change; the algorithm
// around them (predictWith, updateWith) repeats the reference's operation
// for operation, so with forward order and rounded products it gives the
// reference's bits (TestPlainMachineIsTheReference).
type sums struct {
	add, sub func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64
}

// forward is the reference's order: first term first, each product rounded.
var forward = sums{
	add: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := 0; l < n; l++ {
			s += float64(a[ia+l*sa] * b[ib+l*sb])
		}
		return s
	},
	sub: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := 0; l < n; l++ {
			s -= float64(a[ia+l*sa] * b[ib+l*sb])
		}
		return s
	},
}

// reversed sums from the last term to the first, each product rounded: the
// resum variant. It has the same bits on every platform, different from the
// reference's in the last places.
var reversed = sums{
	add: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := n - 1; l >= 0; l-- {
			s += float64(a[ia+l*sa] * b[ib+l*sb])
		}
		return s
	},
	sub: func(s float64, a []float64, ia, sa int, b []float64, ib, sb, n int) float64 {
		for l := n - 1; l >= 0; l-- {
			s -= float64(a[ia+l*sa] * b[ib+l*sb])
		}
		return s
	},
}

// predictResum computes x⁻ = F x and P⁻ = F (P Fᵀ) + Q, the product
// associated the other way round from the reference's (F P) Fᵀ, with every
// inner product summed backwards. Both are the same matrix in exact
// arithmetic; in floating point they differ by at most a few γ_n bounds
// (Higham 2002, eq. 3.4).
func predictResum(_ *kalman.Filter, md mot.Model, x, p []float64) {
	n := md.StateDim
	f, q := md.F.Data, md.Q.Data
	xs := make([]float64, n)
	for i := 0; i < n; i++ {
		xs[i] = reversed.add(0, f, i*n, 1, x, 0, 1, n)
	}
	pf := make([]float64, n*n) // P Fᵀ
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			pf[i*n+j] = reversed.add(0, p, i*n, 1, f, j*n, 1, n)
		}
	}
	copy(x, xs)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s := reversed.add(q[i*n+j], f, i*n, 1, pf, j, n, n)
			p[i*n+j], p[j*n+i] = s, s
		}
	}
}

func updateResum(_ *kalman.Filter, md mot.Model, od *tracker.ObjectDetail, z []float64) error {
	return updateWith(reversed, md, od, z)
}

func predictFused(_ *kalman.Filter, md mot.Model, x, p []float64) { predictWith(plain, md, x, p) }

func updateFused(_ *kalman.Filter, md mot.Model, od *tracker.ObjectDetail, z []float64) error {
	return updateWith(plain, md, od, z)
}

// predictWith computes x⁻ = F x and P⁻ = (F P) Fᵀ + Q (upper triangle,
// mirrored) in place, in the reference's order of operations.
func predictWith(k sums, md mot.Model, x, p []float64) {
	n := md.StateDim
	f, q := md.F.Data, md.Q.Data
	xs := make([]float64, n)
	for i := 0; i < n; i++ {
		xs[i] = k.add(0, f, i*n, 1, x, 0, 1, n)
	}
	fp := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			fp[i*n+j] = k.add(0, f, i*n, 1, p, j, n, n)
		}
	}
	copy(x, xs)
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			s := k.add(0, fp, i*n, 1, f, j*n, 1, n)
			s += q[i*n+j]
			p[i*n+j], p[j*n+i] = s, s
		}
	}
}

// updateWith computes the posterior of od from its prediction and z, in the
// reference's order of operations: S = (H P⁻) Hᵀ + R, S = L Lᵀ, K = P⁻ Hᵀ S⁻¹
// column by column, x = x⁻ + K ν and the Joseph form
// P = (I − K H) P⁻ (I − K H)ᵀ + (K R) Kᵀ, upper triangle mirrored.
func updateWith(k sums, md mot.Model, od *tracker.ObjectDetail, z []float64) error {
	n, m := md.StateDim, md.MeasDim
	h, r := md.H.Data, md.R.Data
	x, p := od.PredMean, od.PredCov.Data
	if len(z) != m || len(x) != n || len(p) != n*n {
		return fmt.Errorf("update: measurement of length %d and state of length %d, want %d and %d", len(z), len(x), m, n)
	}
	zhat := make([]float64, m)
	for i := 0; i < m; i++ {
		zhat[i] = k.add(0, h, i*n, 1, x, 0, 1, n)
	}
	hp := make([]float64, m*n)
	for i := 0; i < m; i++ {
		for j := 0; j < n; j++ {
			hp[i*n+j] = k.add(0, h, i*n, 1, p, j, n, n)
		}
	}
	s := make([]float64, m*m)
	for i := 0; i < m; i++ {
		for j := i; j < m; j++ {
			v := k.add(0, hp, i*n, 1, h, j*n, 1, n)
			v += r[i*m+j]
			s[i*m+j], s[j*m+i] = v, v
		}
	}
	l := make([]float64, m*m)
	for j := 0; j < m; j++ {
		d := k.sub(s[j*m+j], l, j*m, 1, l, j*m, 1, j)
		if !(d > 0) || math.IsInf(d, 0) {
			return &kalman.NotPositiveDefiniteError{What: "innovation covariance S", Pivot: j, Value: d}
		}
		ljj := math.Sqrt(d)
		l[j*m+j] = ljj
		for i := j + 1; i < m; i++ {
			l[i*m+j] = k.sub(s[i*m+j], l, i*m, 1, l, j*m, 1, j) / ljj
		}
	}
	nu := make([]float64, m)
	for i := 0; i < m; i++ {
		nu[i] = z[i] - zhat[i]
	}
	gain := make([]float64, n*m)
	col := make([]float64, m)
	for i := 0; i < n; i++ {
		for a := 0; a < m; a++ {
			col[a] = hp[a*n+i]
		}
		for a := 0; a < m; a++ { // L y = col
			col[a] = k.sub(col[a], l, a*m, 1, col, 0, 1, a) / l[a*m+a]
		}
		for a := m - 1; a >= 0; a-- { // Lᵀ x = y
			col[a] = k.sub(col[a], l, (a+1)*m+a, m, col, a+1, 1, m-1-a) / l[a*m+a]
		}
		copy(gain[i*m:(i+1)*m], col)
	}
	for i := 0; i < n; i++ {
		od.Mean[i] = k.add(x[i], gain, i*m, 1, nu, 0, 1, m)
	}
	a := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			a[i*n+j] = -k.add(0, gain, i*m, 1, h, j, n, m)
		}
		a[i*n+i] += 1
	}
	ap := make([]float64, n*n)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			ap[i*n+j] = k.add(0, a, i*n, 1, p, j, n, n)
		}
	}
	kr := make([]float64, n*m)
	for i := 0; i < n; i++ {
		for j := 0; j < m; j++ {
			kr[i*m+j] = k.add(0, gain, i*m, 1, r, j, m, m)
		}
	}
	for i := 0; i < n; i++ {
		for j := i; j < n; j++ {
			v := k.add(0, ap, i*n, 1, a, j*n, 1, n)
			t := k.add(0, kr, i*m, 1, gain, j*m, 1, m)
			od.Cov.Data[i*n+j], od.Cov.Data[j*n+i] = v+t, v+t
		}
	}
	return nil
}
