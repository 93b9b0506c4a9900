package compare

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// arith is one way of doing floating-point arithmetic: muladd(x, y, z) is
// x·y + z and round rounds a result to the working precision.
type arith struct {
	muladd func(x, y, z float64) float64
	round  func(float64) float64
}

var (
	plain64 = arith{func(x, y, z float64) float64 { return float64(x*y) + z }, func(v float64) float64 { return v }}
	fused64 = arith{math.FMA, func(v float64) float64 { return v }}
	plain32 = arith{
		func(x, y, z float64) float64 {
			return float64(float32(float64(float32(float64(x*y))) + z))
		},
		func(v float64) float64 { return float64(float32(v)) },
	}
)

// mul returns a·b (a is r×k, b is k×c, row-major).
func (ar arith) mul(a, b []float64, r, k, c int) []float64 {
	out := make([]float64, r*c)
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			s := 0.0
			for l := 0; l < k; l++ {
				s = ar.muladd(a[i*k+l], b[l*c+j], s)
			}
			out[i*c+j] = s
		}
	}
	return out
}

func transpose(a []float64, r, c int) []float64 {
	out := make([]float64, r*c)
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			out[j*r+i] = a[i*c+j]
		}
	}
	return out
}

func (ar arith) add(a, b []float64, sign float64) []float64 {
	out := make([]float64, len(a))
	for i := range a {
		out[i] = ar.round(a[i] + sign*b[i])
	}
	return out
}

// cvFilter runs a 2-D constant-velocity Kalman filter (state [x, ẋ, y, ẏ],
// position measurements) over zs with arithmetic ar and returns the mean and
// covariance after every update. The equations are the textbook predict and
// update (Bar-Shalom, Li, Kirubarajan, Estimation with Applications to
// Tracking and Navigation, 2001, §5.2.3, from memory).
func cvFilter(ar arith, zs [][2]float64) (means, covs [][]float64) {
	const dt, q, r = 1.0, 0.5, 25.0
	F := []float64{1, dt, 0, 0, 0, 1, 0, 0, 0, 0, 1, dt, 0, 0, 0, 1}
	// Discrete white-noise acceleration Q (BLK 2001, eq. 6.3.2-4, from memory).
	q11, q12, q22 := q*dt*dt*dt*dt/4, q*dt*dt*dt/2, q*dt*dt
	Q := []float64{q11, q12, 0, 0, q12, q22, 0, 0, 0, 0, q11, q12, 0, 0, q12, q22}
	H := []float64{1, 0, 0, 0, 0, 0, 1, 0}
	// Correlated measurement noise, as after converting a radar's range
	// and bearing errors to Cartesian axes; it couples the two axes so that
	// the products are inexact and fused and unfused roundings differ.
	R := []float64{r, 9, 9, 16}
	x := []float64{ar.round(zs[0][0]), 0, ar.round(zs[0][1]), 0}
	P := []float64{r, 0, 0, 0, 0, 100, 0, 0, 0, 0, r, 0, 0, 0, 0, 100}
	Ft, Ht := transpose(F, 4, 4), transpose(H, 2, 4)
	for _, z := range zs[1:] {
		x = ar.mul(F, x, 4, 4, 1)
		P = ar.add(ar.mul(ar.mul(F, P, 4, 4, 4), Ft, 4, 4, 4), Q, 1)
		PHt := ar.mul(P, Ht, 4, 4, 2)
		S := ar.add(ar.mul(H, PHt, 2, 4, 2), R, 1)
		det := ar.round(ar.muladd(S[0], S[3], -ar.round(float64(S[1]*S[2]))))
		Si := []float64{ar.round(S[3] / det), ar.round(-S[1] / det), ar.round(-S[2] / det), ar.round(S[0] / det)}
		K := ar.mul(PHt, Si, 4, 2, 2)
		nu := ar.add([]float64{ar.round(z[0]), ar.round(z[1])}, ar.mul(H, x, 2, 4, 1), -1)
		x = ar.add(x, ar.mul(K, nu, 4, 2, 1), 1)
		P = ar.add(P, ar.mul(K, ar.mul(H, P, 2, 4, 4), 4, 2, 4), -1)
		means = append(means, x)
		covs = append(covs, P)
	}
	return means, covs
}

// vessel returns noisy position measurements of a vessel crossing a 4 km
// harbour picture at a few metres per second, drawn from a seeded source.
func vessel(steps int) [][2]float64 {
	rng := rand.New(rand.NewPCG(2026, 12))
	x, y, vx, vy := -1900.0, 1450.0, 6.0, -4.0
	zs := make([][2]float64, steps)
	for k := range zs {
		zs[k] = [2]float64{x + 5*rng.NormFloat64(), y + 5*rng.NormFloat64()}
		vx += 0.7 * rng.NormFloat64()
		vy += 0.7 * rng.NormFloat64()
		x += vx
		y += vy
	}
	return zs
}

func compareRuns(p Profile, am, ac, bm, bc [][]float64) Result {
	var res Result
	for k := range am {
		res.Floats(fmt.Sprintf("step %d / mean", k), p.Mean, am[k], bm[k])
		res.Floats(fmt.Sprintf("step %d / cov", k), p.Cov, ac[k], bc[k])
	}
	return res
}

// TestPortProfileKalman checks the derivation in the PortProfile doc
// comment against an actual recursion: the same filter with and without
// fused multiply-add must agree under Float64Port, and in float32 must agree
// with float64 under Float32Port. Both pairs must really differ (BitExact
// and the tighter profile must flag them), or the check would prove nothing.
func TestPortProfileKalman(t *testing.T) {
	zs := vessel(500)
	pm, pc := cvFilter(plain64, zs)
	fm, fc := cvFilter(fused64, zs)
	sm, sc := cvFilter(plain32, zs)

	if r := compareRuns(Float64Port(), pm, pc, fm, fc); !r.OK() {
		t.Errorf("fused vs plain float64: %d of %d disagree under %s; worst: %v", len(r.Diffs), r.Compared, Float64PortName, r.Worst(3))
	}
	if r := compareRuns(BitExact(), pm, pc, fm, fc); r.OK() {
		t.Errorf("fused and plain float64 runs are bit-identical; the check exercises nothing")
	}
	if r := compareRuns(Float32Port(), pm, pc, sm, sc); !r.OK() {
		t.Errorf("float32 vs float64: %d of %d disagree under %s; worst: %v", len(r.Diffs), r.Compared, Float32PortName, r.Worst(3))
	}
	if r := compareRuns(Float64Port(), pm, pc, sm, sc); r.OK() {
		t.Errorf("float32 run agrees with float64 under %s; the float32 check exercises nothing", Float64PortName)
	}
}
