package kalman

import (
	"fmt"
	"testing"

	"trackgate/harness/mot"
)

// cvAxes is the constant-velocity model with the given number of axes,
// interval dt, white-noise acceleration q and position variance r: the
// shape of PERF-ANCHORS §3 (dt = 0.1, q = 0.5, r = 0.25).
func cvAxes(axes int, dt, q, r float64) mot.Model {
	n, m := 2*axes, axes
	md := mot.Model{StateDim: n, MeasDim: m, Interval: dt,
		F: mot.NewMat(n, n), Q: mot.NewMat(n, n), H: mot.NewMat(m, n), R: mot.NewMat(m, m)}
	for a := 0; a < axes; a++ {
		i := 2 * a
		md.F.Set(i, i, 1)
		md.F.Set(i, i+1, dt)
		md.F.Set(i+1, i+1, 1)
		md.Q.Set(i, i, q*dt*dt*dt*dt/4)
		md.Q.Set(i, i+1, q*dt*dt*dt/2)
		md.Q.Set(i+1, i, q*dt*dt*dt/2)
		md.Q.Set(i+1, i+1, q*dt*dt)
		md.H.Set(a, i, 1)
		md.R.Set(a, a, r)
	}
	return md
}

// BenchmarkStep measures one predict + project + update at state
// dimensions 2, 4 and 6.
func BenchmarkStep(b *testing.B) {
	for _, axes := range []int{1, 2, 3} {
		b.Run(fmt.Sprintf("n=%d", 2*axes), func(b *testing.B) {
			f, err := New(cvAxes(axes, 0.1, 0.5, 0.25))
			if err != nil {
				b.Fatal(err)
			}
			n := 2 * axes
			x, p := make([]float64, n), make([]float64, n*n)
			for i := 0; i < n; i++ {
				p[i*n+i] = 1
			}
			z := make([]float64, axes)
			var pr Projection
			b.ReportAllocs()
			for i := 0; b.Loop(); i++ {
				for a := range z {
					z[a] = 0.1 * float64(i%100)
				}
				f.PredictTo(x, p, x, p)
				if err := f.ProjectTo(&pr, x, p); err != nil {
					b.Fatal(err)
				}
				f.UpdateTo(x, p, x, p, &pr, z)
			}
		})
	}
}
